using NormalFormFit.Ingest;

namespace NormalFormFit.Tests.Ingest;

/// <summary>The manifest's parameter column under any name, its unit from the name, and the ambiguities (common practice, no source).</summary>
public sealed class ManifestParameterTests : IDisposable
{
    private readonly string _folder = Path.Combine(Path.GetTempPath(), "nffit-manifest-" + Guid.NewGuid().ToString("N"));

    public ManifestParameterTests() => Directory.CreateDirectory(_folder);

    public void Dispose() => Directory.Delete(_folder, recursive: true);

    private Loaded<Manifest> Read(string text, string? column = null)
    {
        var path = Path.Combine(_folder, "manifest.csv");
        File.WriteAllText(path, text);
        return Manifest.Read(path, column);
    }

    [Theory]
    [InlineData("file,voltage_V\nrun.csv,6.1\n", "voltage", "V")]
    [InlineData("file,I_app [pA]\nrun.csv,6.1\n", "I_app", "pA")]
    [InlineData("file,param\nrun.csv,6.1\n", null, null)]
    [InlineData("file,drive (mA)\nrun.csv,6.1\n", "drive", "mA")]
    [InlineData("file,mu\nrun.csv,6.1\n", "mu", null)]
    [InlineData("label,file,speed_Hz,notes\nA,run.csv,6.1,cold\n", "speed", "Hz")]
    public void ParameterColumn_MayHaveAnyName_ItsUnitFromTheName(string text, string? name, string? unit)
    {
        var m = Read(text).Value!;
        Assert.Equal(6.1, m.Entries[0].Param);
        Assert.Equal(name, m.ParamName);
        Assert.Equal(unit, m.ParamUnit);
        Assert.Equal(unit, m.Entries[0].Units);
    }

    [Fact]
    public void UnitsColumn_StillWorks_AndWinsOverTheName()
    {
        var m = Read("file,param,units\nrun.csv,1.02,V\n").Value!;
        Assert.Equal("V", m.Entries[0].Units);
    }

    [Fact]
    public void TwoCandidateColumns_AskForParamColumn()
    {
        var r = Read("file,voltage_V,temperature_K\nrun.csv,6.1,300\n");
        var e = Assert.Single(r.Diagnostics);
        Assert.Equal("bad-header", e.Code);
        Assert.Contains("more than one column could hold the parameter values ('voltage_V', 'temperature_K'); choose one with --param-column NAME", e.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("temperature_K", 300.0, "K")]
    [InlineData("2", 6.1, "V")]
    public void ParamColumnOption_Chooses(string column, double value, string unit)
    {
        var m = Read("file,voltage_V,temperature_K\nrun.csv,6.1,300\n", column).Value!;
        Assert.Equal(value, m.Entries[0].Param);
        Assert.Equal(unit, m.ParamUnit);
    }

    [Fact]
    public void ParamColumnOption_NamingNoColumn_IsAnError()
    {
        Assert.Contains("no parameter column 'pressure' (--param-column)", Assert.Single(Read("file,voltage_V\nrun.csv,6\n", "pressure").Diagnostics).Message, StringComparison.Ordinal);
    }
}
