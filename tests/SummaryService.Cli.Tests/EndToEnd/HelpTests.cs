using SummaryService.Cli.Tests.Support;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>Help needs no server and names every sub-command and the common options.</summary>
public sealed class HelpTests
{
    [Fact]
    public async Task Help_lists_every_command_and_the_environment_variables()
    {
        var run = await CliRun.RunAsync(["--help"]);
        Assert.Equal(ExitCodes.Ok, run.ExitCode);
        foreach (string command in new[] { "window", "trend", "follow", "shift", "send", "catalogue", "holdings", "snapshot", "demo" })
        {
            Assert.Contains($"  {command}", run.Out, StringComparison.Ordinal);
        }

        Assert.Contains("SUMMARY_SERVER", run.Out, StringComparison.Ordinal);
        Assert.Contains("SUMMARY_API_KEY", run.Out, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("window")]
    [InlineData("trend")]
    [InlineData("follow")]
    [InlineData("shift")]
    [InlineData("catalogue")]
    [InlineData("holdings")]
    [InlineData("snapshot")]
    public async Task Every_query_command_offers_json(string command)
    {
        var run = await CliRun.RunAsync([command, "--help"]);
        Assert.Equal(ExitCodes.Ok, run.ExitCode);
        Assert.Contains("--json", run.Out, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("window", "-q")]
    [InlineData("follow", "-n")]
    [InlineData("follow", "-q")]
    [InlineData("window", "-k")]
    public async Task Short_flags_that_mean_something_else_elsewhere_are_not_offered(string command, string flag)
    {
        // Common practice in command-line tools: -k "insecure", -n "count or dry run", -q "quiet".
        var run = await CliRun.RunAsync([command, "--help"]);
        Assert.DoesNotMatch($@"(^|[\s,]){flag}[\s,]", run.Out);
    }
}
