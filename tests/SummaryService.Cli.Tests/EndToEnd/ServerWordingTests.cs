using SummaryService.Cli.Tests.Support;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>
/// A refusal from the server reads in the tool's own words: the option the person typed rather than
/// the request field behind it, durations as they are typed, and times in ISO 8601 UTC.
/// </summary>
[Collection(nameof(ServerCollection))]
public sealed class ServerWordingTests(ServerFixture server)
{
    private const string Metric = "otterbyte.test.wording";

    public static TheoryData<string[], string, string> Refusals => new()
    {
        { ["window", Metric, "--bins", "20000"], "error: the server refused the request: --bins is 20000; at most 10000 bins.", "histogram.bin_count" },
        { ["window", Metric, "--share-below", "NaN"], "error: the server refused the request: --share-below is NaN; thresholds must be finite.", "rank_of" },
        { ["window", Metric, "--modes", "5000"], "error: the server refused the request: --modes is 5000; at most 1000 modes are listed.", "max_modes" },
        { ["window", Metric, "--group-by", "zone"], $"error: the server refused the request: --group-by is 'zone', a label none of the 1 series matching {Metric} carries.", "group_by" },
        { ["trend", Metric, "--last", "1d", "--step", "1s"], "error: the server refused the request: --step 1s cuts the window of 1d into 86400 steps; at most 10000 are allowed.", "00:00:01" },
    };

    [Theory]
    [MemberData(nameof(Refusals))]
    public async Task The_server_s_field_names_become_the_command_s_options(string[] args, string line, string serverWord)
    {
        Assert.Equal(ExitCodes.Ok, (await CliRun.AgainstAsync(server.Address, "send", Metric, "4", "--label", "region=north")).ExitCode);
        var run = await CliRun.AgainstAsync(server.Address, args);
        Assert.Equal(ExitCodes.Usage, run.ExitCode);
        Assert.Equal(line, Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries)));
        Assert.DoesNotContain(serverWord, run.Error, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_refused_batch_time_names_the_option_and_the_time_in_iso_8601_utc()
    {
        var run = await CliRun.AgainstAsync(server.Address, "send", Metric, "1", "--at", "now-400d");
        Assert.Equal(ExitCodes.Usage, run.ExitCode);
        string line = Assert.Single(run.Error.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Matches(@"^error: batch 1 was refused \(InvalidArgument\): the batch's time \(--at\) is \d{4}-\d\d-\d\dT\d\d:\d\d:\d\d(\.\d{3})?Z \(Unix ms \d+\), older than the retention limit ", line);
        Assert.DoesNotContain("time_unix_ms", line, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_bare_duration_is_a_length_and_an_instant_says_now_minus()
    {
        var run = await CliRun.AgainstAsync(server.Address, "window", Metric, "--from", "1h");
        Assert.Equal(ExitCodes.Usage, run.ExitCode);
        Assert.Contains("'1h' is a length, not an instant; for that long ago write now-1h.", run.Error, StringComparison.Ordinal);
    }
}
