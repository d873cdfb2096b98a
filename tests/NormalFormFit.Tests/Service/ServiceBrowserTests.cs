using System.Globalization;
using System.Text.Json;
using Microsoft.AspNetCore.Hosting.Server;
using Microsoft.AspNetCore.Hosting.Server.Features;
using Microsoft.Extensions.DependencyInjection;
using NormalFormFit.Cli.Service;
using NormalFormFit.Tests.Reporting;
using PuppeteerSharp;

namespace NormalFormFit.Tests.Service;

/// <summary>
/// The upload page in a real browser: headless Chromium from Debian's package (installed by .ci/install-browser),
/// driven by PuppeteerSharp with its executable path set (no browser download). The page is used as a person would:
/// choose the run files, type each run's value, start, wait, open the report page and read the onset off it.
/// </summary>
[Collection(SimulatedSweepGroup.Name)]
public class ServiceBrowserTests(SimulatedSweep sweep)
{
    [ChromiumFact]
    public async Task UploadPage_InChromium_TypedValues_GiveTheReportPageWithAnalyzesOnset()
    {
        Assert.True(Chromium.Path is not null, "chromium is required under CI=true: .ci/install-browser installs it");
        var data = Directory.CreateTempSubdirectory("nffit-service-browser-").FullName;
        var settings = new ServiceSettings { DataDir = data, Port = 0, Workers = 1 };
        var app = ServiceHost.Build(settings);
        await app.StartAsync();
        try
        {
            var address = app.Services.GetRequiredService<IServer>().Features.Get<IServerAddressesFeature>()!.Addresses.Single();
            var values = File.ReadAllLines(sweep.Manifest).Skip(1).Select(l => l.Split(',')).ToDictionary(f => f[0], f => f[1]);
            await using var browser = await Puppeteer.LaunchAsync(new LaunchOptions
            {
                ExecutablePath = Chromium.Path,
                Headless = true,
                Args = ["--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage"],
            });
            await using var page = await browser.NewPageAsync();
            var problems = new List<string>();
            page.Console += (_, e) =>
            {
                if (e.Message.Type is ConsoleType.Error or ConsoleType.Warning)
                {
                    problems.Add(e.Message.Text);
                }
            };
            page.PageError += (_, e) => problems.Add(e.Message);

            await page.GoToAsync(address + "/", WaitUntilNavigation.Networkidle0);
            var input = await page.QuerySelectorAsync("#files");
            await input.UploadFileAsync(sweep.RunFiles.ToArray());
            foreach (var (file, typed) in values)
            {
                await page.TypeAsync($"input[data-file='{file}']", typed);
            }

            await page.ClickAsync("#go");
            await page.WaitForSelectorAsync("#result:not([hidden])", new WaitForSelectorOptions { Timeout = 180_000 });
            var onsetOnUploadPage = await page.EvaluateExpressionAsync<string>("document.getElementById('onset').textContent");
            var reportHref = await page.EvaluateExpressionAsync<string>("document.getElementById('page').href");
            await page.GoToAsync(reportHref, WaitUntilNavigation.Load);
            var shown = await page.EvaluateExpressionAsync<string>("document.querySelector('.recommended .value').textContent");

            Assert.Empty(problems);
            using var reference = JsonDocument.Parse(await File.ReadAllBytesAsync(sweep.ReferenceJson));
            var expected = reference.RootElement.GetProperty("onset").GetProperty("recommended");
            var value = double.Parse(shown.Split('±')[0].Trim(), CultureInfo.InvariantCulture);
            var se = double.Parse(shown.Split('±')[1].Trim(), CultureInfo.InvariantCulture);

            // The page rounds to the digits the standard error warrants; both the value and its s.e. match analyze's.
            Assert.Equal(expected.GetProperty("value").GetDouble(), value, 1e-8);
            Assert.Equal(expected.GetProperty("se").GetDouble(), se, 1e-8);
            Assert.StartsWith(expected.GetProperty("value").GetDouble().ToString("G8", CultureInfo.InvariantCulture)[..6], onsetOnUploadPage, StringComparison.Ordinal);
        }
        finally
        {
            await app.StopAsync();
            await app.DisposeAsync();
            Directory.Delete(data, recursive: true);
        }
    }
}
