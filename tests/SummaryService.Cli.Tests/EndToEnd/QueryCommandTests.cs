using MathNet.Numerics.Statistics;
using SummaryService.Cli.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Tests.EndToEnd;

/// <summary>window, trend, follow and shift against the real server, figures checked against MathNet.Numerics.</summary>
[Collection(nameof(ServerCollection))]
public sealed class QueryCommandTests(ServerFixture server)
{
    [Fact]
    public async Task Window_reports_every_statistic_as_MathNet_computes_it()
    {
        double[] values = Samples.Latencies(150, seed: 501);
        var sent = await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.window", .. values.Select(Samples.Text), "--label", "region=north"]);
        Assert.Equal(0, sent.ExitCode);
        Assert.Contains("150 accepted", sent.Out, StringComparison.Ordinal);

        var reply = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.window", "--last", "15m", "--quantile", "0.1", "--quantile", "0.5", "--quantile", "0.95", "--share-below", "25", "--json")).Json<SummarizeReply>();
        Summary s = Assert.Single(reply.Groups).Summary;
        double[] sorted = [.. values.Order()];
        Assert.True(s.Exact); // 150 values stay below the sketch's k = 200, so nothing is approximated
        Assert.Equal(150ul, s.Count);
        Assert.Equal(values.Mean(), s.Mean, 1e-9); // MathNet.Numerics Statistics.Mean
        Assert.Equal(values.Variance(), s.Variance, 1e-9); // MathNet.Numerics sample variance (n − 1)
        Assert.Equal(values.StandardDeviation(), s.Stddev, 1e-9); // MathNet.Numerics
        Assert.Equal(values.Skewness(), s.Skewness, 1e-9); // MathNet.Numerics adjusted Fisher–Pearson G1
        Assert.Equal(values.Kurtosis(), s.Kurtosis, 1e-9); // MathNet.Numerics bias-corrected excess kurtosis G2
        Assert.Equal(sorted[0], s.Min);
        Assert.Equal(sorted[^1], s.Max);
        double[] qs = [0.1, 0.5, 0.95];
        for (int i = 0; i < qs.Length; i++)
        {
            // Hyndman & Fan (1996) definition 7 through MathNet.Numerics QuantileDefinition.R7.
            Assert.Equal(SortedArrayStatistics.QuantileCustom(sorted, qs[i], QuantileDefinition.R7), s.Quantiles[i].Value, 1e-9);
        }

        Assert.Equal(values.Count(v => v <= 25) / 150.0, Assert.Single(s.Ranks).Fraction, 1e-12); // share at or below, counted directly

        var table = await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.window", "--last", "15m", "--bins", "8");
        Assert.Equal(0, table.ExitCode);
        foreach (string statistic in new[] { "mean", "median (p50)", "mean − median", "skewness", "excess kurtosis", "IQR", "MAD", "quartile skewness", "p99", "exact: nothing was approximated", "histogram" })
        {
            Assert.Contains(statistic, table.Out, StringComparison.Ordinal);
        }

        Assert.Contains(Rendering.Figures.Of(values.Mean()), table.Out, StringComparison.Ordinal);
        Assert.Equal(8, table.Lines.Count(l => l.StartsWith('[') && l.Contains('█', StringComparison.Ordinal)));
    }

    [Fact]
    public async Task Window_groups_by_a_label()
    {
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.grouped", "1", "2", "3", "-l", "region=north"]);
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.grouped", "10", "20", "-l", "region=south"]);
        var reply = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.grouped", "--group-by", "region", "--json")).Json<SummarizeReply>();
        Assert.Equal(["north", "south"], reply.Groups.Select(g => g.Labels["region"]));
        Assert.Equal([3ul, 2ul], reply.Groups.Select(g => g.Summary.Count));
        var north = (await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.grouped", "--label", "region=south", "--json")).Json<SummarizeReply>();
        Assert.Equal(15, Assert.Single(north.Groups).Summary.Mean, 12); // (10 + 20) / 2
    }

    [Fact]
    public async Task Trend_gives_one_point_per_step_and_a_sparkline()
    {
        long now = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds();
        double[][] steps = [Samples.Latencies(40, 601), Samples.Latencies(50, 602, mu: 3.5), Samples.Latencies(60, 603, mu: 4)];
        var csv = new System.Text.StringBuilder("value,time\n");
        for (int i = 0; i < steps.Length; i++)
        {
            long at = now - ((25 - (10 * i)) * 60_000L); // 25, 15 and 5 minutes ago
            foreach (double v in steps[i])
            {
                csv.Append(Samples.Text(v)).Append(',').Append(Samples.Iso(at)).Append('\n');
            }
        }

        using var data = new TestSupport.TempDirectory();
        string file = Path.Combine(data.Path, "steps.csv");
        await File.WriteAllTextAsync(file, csv.ToString());
        Assert.Equal(0, (await CliRun.AgainstAsync(server.Address, "send", "otterbyte.test.trend", "--file", file)).ExitCode);

        string from = Samples.Iso(now - (30 * 60_000L));
        var reply = (await CliRun.AgainstAsync(server.Address, "trend", "otterbyte.test.trend", "--from", from, "--to", Samples.Iso(now), "--step", "10m", "--quantile", "0.5", "--json")).Json<TimelineReply>();
        Assert.Equal(3, reply.Steps.Count);
        for (int i = 0; i < steps.Length; i++)
        {
            Summary s = Assert.Single(reply.Steps[i].Groups).Summary;
            Assert.Equal((ulong)steps[i].Length, s.Count);
            Assert.Equal(steps[i].Median(), s.Quantiles[0].Value, 1e-9); // MathNet.Numerics median (R7 at 0.5 agrees with every definition's midpoint rule)
        }

        var table = await CliRun.AgainstAsync(server.Address, "trend", "otterbyte.test.trend", "--from", from, "--to", Samples.Iso(now), "--step", "10m", "--plot", "0.9");
        Assert.Equal(0, table.ExitCode);
        string spark = Assert.Single(table.Lines, l => l.StartsWith("p90 per step:", StringComparison.Ordinal));
        string line = spark["p90 per step: ".Length..][..3];
        Assert.Equal('▁', line[0]); // three rising steps: lowest, something between, highest
        Assert.InRange(line[1], '▂', '▇');
        Assert.Equal('█', line[2]);
    }

    [Fact]
    public async Task Follow_stops_after_count_updates()
    {
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.follow", "4", "5", "6", "7"]);
        var json = await CliRun.AgainstAsync(server.Address, "follow", "otterbyte.test.follow", "--count", "2", "--every", "100ms", "--json");
        Assert.Equal(0, json.ExitCode);
        Assert.Equal(2, json.Lines.Length);
        Assert.All(json.Lines, l => Assert.Equal(5.5, Assert.Single(Google.Protobuf.JsonParser.Default.Parse<SummarizeReply>(l).Groups).Summary.Mean, 12));

        var text = await CliRun.AgainstAsync(server.Address, "follow", "otterbyte.test.follow", "--count", "3", "--every", "100ms");
        Assert.Equal(0, text.ExitCode);
        Assert.Contains("update 3 at", text.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("update 4", text.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Follow_until_cancelled_ends_cleanly()
    {
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.followed", "1"]);
        // Long enough for the first update on a busy machine, whose first call also pays for JIT
        // and connection set-up (700 ms once saw none); later ones come every 100 ms.
        using var stop = new CancellationTokenSource(TimeSpan.FromSeconds(3));
        var run = await CliRun.RunAsync(["follow", "otterbyte.test.followed", "--every", "100ms", "--json", "--server", server.Address.ToString()], cancellationToken: stop.Token);
        Assert.Equal(0, run.ExitCode);
        Assert.NotEmpty(run.Lines);
        Assert.Equal("", run.Error);
    }

    [Fact]
    public async Task Shift_between_two_label_sets_calls_a_clear_move_and_matches_MathNet_medians()
    {
        double[] north = Samples.Latencies(150, 701, mu: 3.0, sigma: 0.2);
        double[] south = Samples.Latencies(150, 702, mu: 3.6, sigma: 0.2);
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.shift", .. north.Select(Samples.Text), "-l", "region=north"]);
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.shift", .. south.Select(Samples.Text), "-l", "region=south"]);
        string[] args = ["shift", "otterbyte.test.shift", "--a", "15m", "--b", "15m", "--a-label", "region=north", "--b-label", "region=south", "--quantile", "0.5"];
        var reply = (await CliRun.AgainstAsync(server.Address, [.. args, "--json"])).Json<CompareReply>();
        QuantileShift median = Assert.Single(reply.Shifts);
        Assert.Equal(north.Median(), median.A, 1e-9); // MathNet.Numerics
        Assert.Equal(south.Median(), median.B, 1e-9); // MathNet.Numerics
        Assert.True(median.Significant); // e^3.6 vs e^3.0 medians, 150 values each: far beyond the sampling error
        Assert.True(median.Delta > 0);

        var table = await CliRun.AgainstAsync(server.Address, args);
        Assert.Contains("moved up", table.Out, StringComparison.Ordinal);
        Assert.Contains("Kolmogorov–Smirnov distance", table.Out, StringComparison.Ordinal);
    }

    [Fact]
    public async Task Shift_that_its_intervals_cannot_settle_says_inconclusive_with_the_ratio_and_is_never_grey()
    {
        // The same 150 values on both sides: every quantile's two intervals overlap.
        double[] values = Samples.Latencies(150, 711);
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.same", .. values.Select(Samples.Text), "-l", "region=north"]);
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.same", .. values.Select(Samples.Text), "-l", "region=south"]);
        string[] args = ["shift", "otterbyte.test.same", "--a", "15m", "--b", "15m", "--a-label", "region=north", "--b-label", "region=south", "--quantile", "0.5", "--quantile", "0.99"];
        var reply = (await CliRun.AgainstAsync(server.Address, [.. args, "--json"])).Json<CompareReply>();
        Assert.All(reply.Shifts, s => Assert.False(s.Significant));

        var table = await CliRun.RunAsync([.. args, "--server", server.Address.ToString()], colours: true);
        Assert.Equal(0, table.ExitCode);
        string[] rows = [.. table.Lines.Where(l => l.Contains("inconclusive:", StringComparison.Ordinal))];
        Assert.Equal(2, rows.Length);
        Assert.Equal(2, table.Lines.Count(l => l.Contains("intervals overlap", StringComparison.Ordinal)));
        Assert.All(rows, r => Assert.Contains("×1 ", r, StringComparison.Ordinal)); // b / a of equal point estimates
        Assert.Contains("b / a", table.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("within error", table.Out, StringComparison.Ordinal);
        Assert.DoesNotContain("\u001b[90m", table.Out, StringComparison.Ordinal); // ANSI bright black, the grey of a dimmed cell (ECMA-48 SGR 90)
    }

    [Fact]
    public async Task Window_shows_min_median_and_max_once_each()
    {
        await CliRun.AgainstAsync(server.Address, ["send", "otterbyte.test.rows", .. Samples.Latencies(60, 721).Select(Samples.Text)]);
        var table = await CliRun.AgainstAsync(server.Address, "window", "otterbyte.test.rows", "--quantile", "0", "--quantile", "0.5", "--quantile", "0.999", "--quantile", "1");
        Assert.Equal(0, table.ExitCode);
        int Rows(string name) => table.Lines.Count(l => l.StartsWith($"│ {name} ", StringComparison.Ordinal));
        Assert.Equal(1, Rows("min"));
        Assert.Equal(1, Rows("median (p50)"));
        Assert.Equal(1, Rows("max"));
        Assert.Equal(0, Rows("p50"));
        Assert.Equal(1, Rows("p99.9"));
        Assert.DoesNotContain("(q0)", table.Out, StringComparison.Ordinal);
    }
}
