namespace NormalFormFit.Tests;

public class DiagnosticTests
{
    [Fact]
    public void Diagnostic_WithFileLineAndColumn_FormatsAsCompilerStyleLocation()
    {
        var d = new Diagnostic(Severity.Error, "bad-number", "expected a number", "runs/a.csv", 12, 3);
        Assert.Equal("runs/a.csv:12:3: error: expected a number", d.ToString());
    }
}
