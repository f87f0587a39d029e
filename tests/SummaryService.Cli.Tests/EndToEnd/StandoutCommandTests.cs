using MathNet.Numerics.Statistics;
using SummaryService.Cli.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>standout against the real server: the slow courier route comes first and alone stands out higher; refusals in the command's words.</summary>
[Collection(nameof(ServerCollection))]
public sealed class StandoutCommandTests(ServerFixture server)
{
    [Fact]
    public async Task The_slow_route_is_ranked_first_and_alone_stands_out_higher()
    {
        // Twelve Otterbyte courier routes; on route-c every delivery takes 1.8 times as long. Every
        // other route's rest holds route-c, so it lies a little above that route: a normal route
        // may rightly stand out as lower than its rest, but none as higher.
        for (int r = 0; r < 12; r++)
        {
            double[] values = Samples.Latencies(400, seed: 900 + r);
            string route = $"route-{(char)('a' + r)}";
            string stdin = string.Join('\n', (r == 2 ? values.Select(v => v * 1.8) : values).Select(Samples.Text));
            var sent = await CliRun.RunAsync(["send", "otterbyte.test.standout", "-l", $"route={route}", "--server", server.Address.ToString()], stdin: stdin);
            Assert.Equal(0, sent.ExitCode);
        }

        string[] args = ["standout", "otterbyte.test.standout", "--by", "route", "--window", "15m", "--rank-by", "ratio", "--at", "0.5", "--quantile", "0.5", "--quantile", "0.9"];
        StandoutReply reply = (await CliRun.AgainstAsync(server.Address, [.. args, "--json"])).Json<StandoutReply>();
        StandoutGroup first = reply.Ranked[0];
        Assert.Equal("route-c", first.Value);
        Assert.True(first.Significant);
        Assert.All(reply.Ranked.Skip(1), g => Assert.False(g.Significant && g.Quantiles[0].Shift.Delta > 0, g.ToString()));
        Assert.Equal(11u, first.RestSeriesMerged);

        var table = await CliRun.AgainstAsync(server.Address, [.. args, "--top", "3"]);
        Assert.Equal(0, table.ExitCode);
        string[] rows = [.. table.Lines.Where(l => l.StartsWith("│ ", StringComparison.Ordinal) && !l.Contains("route ", StringComparison.Ordinal))];
        Assert.Equal(3, rows.Length);
        Assert.Contains("route-c", rows[0], StringComparison.Ordinal);
        Assert.Contains("stands out: higher", rows[0], StringComparison.Ordinal);
        Assert.All(rows.Skip(1), r => Assert.DoesNotContain("stands out: higher", r, StringComparison.Ordinal));
        Assert.Contains("400 (1)", rows[0], StringComparison.Ordinal);
        Assert.Contains("4,400 (11)", rows[0], StringComparison.Ordinal);
        Assert.Contains("… 9 more ranked groups", table.Out, StringComparison.Ordinal);

        // The median of route-c's 400 values, as MathNet.Numerics computes it, lies in the group's interval.
        double median = Samples.Latencies(400, seed: 902).Select(v => v * 1.8).Median();
        Assert.InRange(median, first.Quantiles[0].Shift.BLow, first.Quantiles[0].Shift.BHigh);
    }

    [Fact]
    public async Task A_label_no_series_carries_is_refused_in_the_commands_own_words()
    {
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.standout.refused", "1", "2", "-l", "route=a"]);

        var refused = await CliRun.AgainstAsync(server.Address, "standout", "otterbyte.test.standout.refused", "--by", "depot");

        Assert.Equal(1, refused.ExitCode);
        Assert.Contains("--by is 'depot'", refused.Error, StringComparison.Ordinal);
    }
}
