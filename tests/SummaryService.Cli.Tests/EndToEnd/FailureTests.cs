using SummaryService.Cli.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>Mistakes and outages end in one line on standard error and the documented exit code.</summary>
[Collection(nameof(ServerCollection))]
public sealed class FailureTests(ServerFixture server)
{
    public static TheoryData<string[]> BadCommandLines => new()
    {
        { ["window"] },
        { ["window", "otterbyte.any", "--last", "5x"] },
        { ["window", "otterbyte.any", "--last", "15"] },
        { ["window", "otterbyte.any", "--from", "now-1h", "--to", "now-2h"] },
        { ["window", "otterbyte.any", "--from", "1h"] },
        { ["window", "otterbyte.any", "--to", "1h"] },
        { ["window", "otterbyte.any", "--from", "2026-13-45T00:00:00Z"] },
        { ["window", "otterbyte.any", "--quantile", "1.5"] },
        { ["window", "otterbyte.any", "--confidence", "1"] },
        { ["window", "otterbyte.any", "--label", "region"] },
        { ["window", "otterbyte.any", "--bins", "many"] },
        { ["window", "--nonsense", "otterbyte.any"] },
        { ["trend", "otterbyte.any", "--step", "0s"] },
        { ["trend", "otterbyte.any", "--plot", "0.75"] },
        { ["follow", "otterbyte.any", "--every", "10ms"] },
        { ["shift", "otterbyte.any", "--a", "yesterday"] },
        { ["shift", "otterbyte.any", "--b", "now-1h..now-2h"] },
        { ["shift", "otterbyte.any", "--a", "2h..1h"] },
        { ["send", "otterbyte.any", "1", "--at", "5m"] },
        { ["window", "otterbyte.any", "-k", "some-key"] },
        { ["send", "otterbyte.any"] },
        { ["send", "otterbyte.any", "twelve"] },
        { ["send", "otterbyte.any", "--file", "/nonexistent/values.csv"] },
        { ["send", "otterbyte.any", "1", "--batch-size", "0"] },
        { ["demo", "--backfill", "7h"] },
        { ["demo", "--deploy-ago", "4h", "--backfill", "3h"] },
        { ["nonsense"] },
        { ["window", "otterbyte.any", "--server", "ftp://127.0.0.1:1"] },
    };

    [Theory]
    [MemberData(nameof(BadCommandLines))]
    public async Task Bad_arguments_are_usage_errors(string[] args)
    {
        var run = await CliRun.AgainstAsync(server.Address, args);
        Assert.Equal(ExitCodes.Usage, run.ExitCode);
        Assert.NotEqual("", run.Error.Trim());
        Assert.DoesNotContain("   at ", run.Error + run.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_value_the_server_refuses_is_a_usage_error_naming_it()
    {
        var run = await CliRun.AgainstAsync(server.Address, "send", "otterbyte.test.refused", "1", "NaN");
        Assert.Equal(ExitCodes.Usage, run.ExitCode);
        string line = Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Contains("value #2 of the batch is NaN", line, StringComparison.Ordinal);
        Assert.DoesNotContain("values[", line, StringComparison.Ordinal);
    }

    [Fact]
    public async Task An_unknown_series_is_one_line_and_exit_code_4()
    {
        var run = await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.nothing_here");
        Assert.Equal(ExitCodes.NotFound, run.ExitCode);
        string line = Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Equal("error: no series matches otterbyte.test.nothing_here. List what exists with 'sumq catalogue'.", line);
        var labelled = await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.nothing_here", "--label", "region=north", "--label", "host=a");
        Assert.Contains("no series matches otterbyte.test.nothing_here · host=a · region=north.", labelled.Error, StringComparison.Ordinal);
        Assert.Equal(ExitCodes.NotFound, (await CliRun.AgainstAsync(server.Address, "shift", "otterbyte.test.nothing_here")).ExitCode);
        Assert.Equal(ExitCodes.NotFound, (await CliRun.AgainstAsync(server.Address, "catalogue", "otterbyte.test.nothing_here")).ExitCode);
    }

    [Fact]
    public async Task An_empty_window_is_exit_code_4()
    {
        await CliRun.AgainstAsync(server.Address, "send", "otterbyte.test.old", "1", "--at", "now-2h");
        var run = await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.old", "--last", "5m");
        Assert.Equal(ExitCodes.NotFound, run.ExitCode);
        Assert.Contains("no values in the window", run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task An_unreachable_server_is_one_line_and_exit_code_2()
    {
        int port = ServerProcess.FreePort(); // a free loopback port: nothing listens there
        foreach (string[] args in new[] { ["window", "otterbyte.any"], ["send", "otterbyte.any", "1"], new[] { "catalogue" }, ["follow", "otterbyte.any", "--count", "1"], ["demo", "--backfill", "1m", "--duration", "1s"] })
        {
            var run = await CliRun.RunAsync([.. args, "--server", $"http://127.0.0.1:{port}"]);
            Assert.Equal(ExitCodes.Unreachable, run.ExitCode);
            string line = Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
            Assert.Contains($"cannot reach the server at http://127.0.0.1:{port}/", line, StringComparison.Ordinal);

            // What to check, not a command that only works from a source checkout.
            Assert.Contains("--server, else SUMMARY_SERVER, else http://127.0.0.1:5170", line, StringComparison.Ordinal);
            Assert.Contains("grpc.health.v1.Health/Check", line, StringComparison.Ordinal);
            Assert.DoesNotContain("dotnet run", line, StringComparison.Ordinal);
        }
    }

    [Fact]
    public async Task The_server_address_comes_from_the_environment_unless_given()
    {
        await CliRun.AgainstAsync(server.Address, "send", "otterbyte.test.env", "3");
        var viaEnvironment = await CliRun.RunAsync(["window", "otterbyte.test.env", "--json"], environment: new Dictionary<string, string> { ["SUMMARY_SERVER"] = server.Address.ToString() });
        Assert.Equal(ExitCodes.Ok, viaEnvironment.ExitCode);
        int port = ServerProcess.FreePort();
        var overridden = await CliRun.RunAsync(["window", "otterbyte.test.env", "--server", $"http://127.0.0.1:{port}"], environment: new Dictionary<string, string> { ["SUMMARY_SERVER"] = server.Address.ToString() });
        Assert.Equal(ExitCodes.Unreachable, overridden.ExitCode);
    }
}
