using NormalFormFit.Tests.Cli;

namespace NormalFormFit.Tests.Compare;

/// <summary>
/// Every refusal of a planar system by <c>compare</c>: exit code 2 (bad input, docs/model-expressions.md) and one message
/// that names the statement, the column and what was expected, or what is missing. The systems are refused before any
/// file is read, so the manifest need not exist.
/// </summary>
public class PlanarRefusalTests
{
    private const string Manifest = "no-such-folder/manifest.csv";

    private static (int Code, string Err) Run(params string[] args)
    {
        var (code, _, err) = CliTestHost.Run(["compare", Manifest, .. args]);
        return (code, err);
    }

    [Theory]
    [InlineData("v' = mu + v - v^3/3 - w", "needs two equations", null)]
    [InlineData("v' = mu - v; v' = v - w", "'v' is given a second equation", "column 14")]
    [InlineData("v' = mu - v + w1; w' = v - w", "'w1' has no equation of its own", "column 15")]
    [InlineData("v' = 1 - v - w; w' = v - w", "does not use the control parameter 'mu'", null)]
    [InlineData("v = mu - v; w' = v - w", "expected a prime after the variable name", "column 3")]
    [InlineData("v' mu - v; w' = v - w", "expected '=' after v'", "column 4")]
    [InlineData("v' = mu + sinh(v); w' = v - w", "unknown function 'sinh'", "column 11")]
    [InlineData("v' = mu - v\nw' = v - theta", "'theta' is the phase of a one-equation phase model", "column 10")]
    [InlineData("mu' = v; w' = v - w", "'mu' is a reserved name", "column 1")]
    [InlineData("v' = mu - v; w' = v - w; u' = 1", "exactly two equations", "statement 3")]
    public void AMalformedSystem_IsRefusedWithItsPlace(string system, string message, string? place)
    {
        var (code, err) = Run("--model", system, "--observe", "v");
        Assert.Equal(2, code);
        Assert.Contains(message, err, StringComparison.Ordinal);
        if (place is not null)
        {
            Assert.Contains(place, err, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void AnErrorOnTheSecondLine_IsShownWithThatLine()
    {
        var (code, err) = Run("--model", "v' = mu - v\nw' = v - * w", "--observe", "v");
        Assert.Equal(2, code);
        Assert.Contains("statement 2, column 10", err, StringComparison.Ordinal);
        Assert.Contains("nffit:   w' = v - * w", err, StringComparison.Ordinal);
    }

    [Fact]
    public void ASystemWithoutTheRecordedVariable_IsRefused()
    {
        var (code, err) = Run("--model", "v' = mu - v - w; w' = v - w");
        Assert.Equal(2, code);
        Assert.Contains("add --observe v (or w)", err, StringComparison.Ordinal);
    }

    [Fact]
    public void AnObservableThatIsNotAVariable_IsRefused()
    {
        var (code, err) = Run("--model", "v' = mu - v - w; w' = v - w", "--observe", "x");
        Assert.Equal(2, code);
        Assert.Contains("'x' is not a variable of the system; its variables are v and w", err, StringComparison.Ordinal);
    }

    [Fact]
    public void TwoObservables_PositionsOfASystem_AreRefusedAsNotSupportedYet()
    {
        var (code, err) = Run("--model", "v' = mu - v - w; w' = v - w", "--observe", "v,w");
        Assert.Equal(2, code);
        Assert.Contains("not supported yet", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--observe", "v")]
    [InlineData("--initial", "v=0")]
    public void APhaseModelWithAnOptionOfSystems_IsRefused(string option, string value)
    {
        var (code, err) = Run("--model", "mu - a*sin(theta)", option, value);
        Assert.Equal(2, code);
        Assert.Contains($"{option} belongs to a planar system", err, StringComparison.Ordinal);
    }

    [Fact]
    public void AnInitialStateForAnUnknownVariable_IsRefused()
    {
        var (code, err) = Run("--model", "v' = mu - v - w; w' = v - w", "--observe", "v", "--initial", "u=1");
        Assert.Equal(2, code);
        Assert.Contains("'u' is not a variable of the system", err, StringComparison.Ordinal);
    }

    [Fact]
    public void AReportFolderForASystem_IsRefusedAsNotWrittenYet()
    {
        var (code, err) = Run("--model", "v' = mu - v - w; w' = v - w", "--observe", "v", "--out", "somewhere");
        Assert.Equal(2, code);
        Assert.Contains("not written for a planar system yet", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--no-periods", null, "without the periods nothing is left to compare")]
    [InlineData("--pilot", "9", "no pilot stage")]
    [InlineData("--pilot", "0", "no pilot stage")]
    public void AnOptionWithoutEffectOnASystem_IsRefusedRatherThanIgnored(string option, string? value, string message)
    {
        string[] extra = value is null ? [option] : [option, value];
        var (code, err) = Run(["--model", "v' = mu - v - w; w' = v - w", "--observe", "v", .. extra]);
        Assert.Equal(2, code);
        Assert.Contains($"{option}: ", err, StringComparison.Ordinal);
        Assert.Contains(message, err, StringComparison.Ordinal);
    }
}
