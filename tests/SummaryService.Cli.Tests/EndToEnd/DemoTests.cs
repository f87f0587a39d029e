using SummaryService.Cli.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>The demo feeds the real server, and the commands it prints show the deploy's shift.</summary>
[Collection(nameof(ServerCollection))]
public sealed class DemoTests(ServerFixture server)
{
    [Fact]
    public async Task The_deploy_shifts_checkout_and_leaves_pricing_alone()
    {
        var demo = await CliRun.AgainstAsync(server.Address, "demo", "--backfill", "40m", "--deploy-ago", "20m", "--rate", "40", "--duration", "2s", "--seed", "11");
        Assert.True(demo.ExitCode == 0, demo.Error);
        Assert.Contains("streaming live traffic for 2s", demo.Out, StringComparison.Ordinal);

        // The printed commands are the ones a newcomer copies; run them as printed, asking for JSON.
        string[] Printed(string prefix, bool withEnd = true) =>
            Assert.Single(demo.Lines, l => l.StartsWith(prefix, StringComparison.Ordinal) && l.Contains(" --to ", StringComparison.Ordinal) == withEnd).Split(' ')[1..];
        var checkout = (await CliRun.RunAsync([.. Printed("sumq shift otterbyte.checkout.latency_ms --a 2", withEnd: false), "--json"])).Json<CompareReply>();
        var pricing = (await CliRun.RunAsync([.. Printed("sumq shift otterbyte.pricing.latency_ms", withEnd: false), "--json"])).Json<CompareReply>();

        Assert.Equal([0.5, 0.9, 0.99], checkout.Shifts.Select(s => s.Q));
        QuantileShift tail = checkout.Shifts[1];
        Assert.True(tail.Significant, $"checkout p90 {tail.A} → {tail.B}"); // log-sd 0.35 → 0.6: lognormal p90 = 120·e^(1.2816σ), ~188 → ~260 ms before the outliers (z(0.9) = 1.2816, NIST/SEMATECH e-Handbook normal table)
        Assert.True(tail.Low > 0);

        // The release's outliers move checkout's p99 several-fold; with the log buckets' tail
        // intervals (±0.54%) the move is called, and by log buckets on both sides.
        QuantileShift p99 = checkout.Shifts[2];
        Assert.True(p99.Significant, $"checkout p99 {p99.A} [{p99.ALow}, {p99.AHigh}] → {p99.B} [{p99.BLow}, {p99.BHigh}]");
        Assert.True(p99.B > 2 * p99.A);
        Assert.Equal(BoundSource.LogBuckets, p99.BLowSource);
        Assert.All(pricing.Shifts, s => Assert.False(s.Significant, $"pricing q{s.Q} {s.A} → {s.B}"));

        // About 20 minutes × 40 values/s on each side, and the release's outliers pull the mean away from the median.
        Assert.InRange(checkout.A.Count, 40_000ul, 56_000ul);
        var before = (await CliRun.RunAsync([.. Printed("sumq window otterbyte.checkout.latency_ms --from"), "--json"])).Json<SummarizeReply>();
        var after = (await CliRun.RunAsync([.. Printed("sumq window otterbyte.checkout.latency_ms --from", withEnd: false), "--json"])).Json<SummarizeReply>();
        Summary b = Assert.Single(before.Groups).Summary;
        Summary a = Assert.Single(after.Groups).Summary;
        Assert.True(a.Mean - a.FiveNumber.Median.Value > 2 * (b.Mean - b.FiveNumber.Median.Value), $"gap {b.Mean - b.FiveNumber.Median.Value} → {a.Mean - a.FiveNumber.Median.Value}");
        Assert.True(a.Stddev > b.Stddev);

        // The printed ranking runs as printed: each region's p99 move against the other regions'.
        var standout = (await CliRun.RunAsync([.. Printed("sumq standout otterbyte.checkout.latency_ms", withEnd: false), "--json"])).Json<StandoutReply>();
        Assert.Equal(3, standout.Ranked.Count + standout.Unranked.Count);
        Assert.Equal(0.99, standout.MeasureQuantile);

        // Every service of the scenario is there, in three regions.
        var catalogue = (await CliRun.AgainstAsync(server.Address, "catalogue", "--json")).Json<CatalogueReply>();
        Assert.Equal(15, catalogue.Series.Count(s => s.Metric.StartsWith("otterbyte.", StringComparison.Ordinal) && s.Labels.ContainsKey("service")));
        var status = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.edge.status", "--last", "1h", "--json")).Json<SummarizeReply>();
        Assert.Equal(200, Assert.Single(status.Groups).Summary.Modes[0].Value); // the scenario's most common code
    }
}
