using System.Globalization;
using System.Text.Json;
using SummaryService.LoadTest.Driving;

namespace SummaryService.LoadTest.Report;

/// <summary>The run as a table for people and as JSON for tools; ratios put the baseline over the sketch server (higher favours the sketch).</summary>
public static class ReportWriter
{
    private static readonly JsonSerializerOptions Json = new() { WriteIndented = true };

    /// <summary>Baseline ÷ sketch for costs (memory, latency), sketch ÷ baseline for rates.</summary>
    public static Dictionary<string, double> Ratios(TargetFigures sketch, TargetFigures? baseline)
    {
        var ratios = new Dictionary<string, double>(StringComparer.Ordinal);
        if (baseline is null)
        {
            return ratios;
        }

        ratios["fill_ingest_rate_sketch_over_baseline"] = Divide(sketch.Fill.ValuesPerSecond, baseline.Fill.ValuesPerSecond);
        ratios["live_ingest_rate_sketch_over_baseline"] = Divide(sketch.Live.ValuesPerSecond, baseline.Live.ValuesPerSecond);
        ratios["rss_after_fill_baseline_over_sketch"] = Divide(baseline.FillRssBytes, sketch.FillRssBytes);
        ratios["fill_data_rss_baseline_over_sketch"] = Divide(baseline.FillRssBytes - baseline.StartRssBytes, sketch.FillRssBytes - sketch.StartRssBytes);
        ratios["peak_rss_baseline_over_sketch"] = Divide(baseline.PeakRssBytes, sketch.PeakRssBytes);
        ratios["data_rss_baseline_over_sketch"] = Divide(baseline.EndRssBytes - baseline.StartRssBytes, sketch.EndRssBytes - sketch.StartRssBytes);
        ratios["summarize_p50_baseline_over_sketch"] = Divide(baseline.Queries.Summarize?.P50Ms, sketch.Queries.Summarize?.P50Ms);
        ratios["summarize_p99_baseline_over_sketch"] = Divide(baseline.Queries.Summarize?.P99Ms, sketch.Queries.Summarize?.P99Ms);
        ratios["timeline_p50_baseline_over_sketch"] = Divide(baseline.Queries.Timeline?.P50Ms, sketch.Queries.Timeline?.P50Ms);
        ratios["timeline_p99_baseline_over_sketch"] = Divide(baseline.Queries.Timeline?.P99Ms, sketch.Queries.Timeline?.P99Ms);
        ratios["all_series_window_p50_baseline_over_sketch"] = Divide(baseline.Window.Repeats?.P50Ms, sketch.Window.Repeats?.P50Ms);
        ratios["all_series_window_first_baseline_over_sketch"] = Divide(baseline.Window.FirstMs, sketch.Window.FirstMs);
        return ratios;
    }

    /// <summary>Writes the table.</summary>
    public static void WriteTable(TextWriter output, RunFigures run)
    {
        TargetFigures s = run.Sketch;
        TargetFigures? b = run.Baseline;
        output.WriteLine($"load run {run.Machine.StartedUtc}: {run.Machine.Cores} cores, load average {run.Machine.LoadAverageAtStart:0.00} at start, {run.Machine.Runtime}");
        output.WriteLine($"command: {run.Command}");
        output.WriteLine($"sketch server: {s.Nodes} node(s); CPU and memory figures are sums over them");
        output.WriteLine();
        output.WriteLine($"| {"figure",-46} | {"sketch server",-26} | {"exact baseline",-26} | {"ratio",-8} |");
        output.WriteLine($"|{new string('-', 48)}|{new string('-', 28)}|{new string('-', 28)}|{new string('-', 10)}|");
        Row(output, "back-fill values/s", Rate(s.Fill), b is null ? "" : Rate(b.Fill), Ratio(run, "fill_ingest_rate_sketch_over_baseline"));
        Row(output, "back-fill ack p50 / p99 ms", Latency(s.Fill.Acks), b is null ? "" : Latency(b.Fill.Acks), "");
        Row(output, "back-fill cores: server / generator / others", Cores(s.Fill.Cpu), b is null ? "" : Cores(b.Fill.Cpu), "");
        Row(output, "back-fill server CPU ns per value", Ns(s.Fill), b is null ? "" : Ns(b.Fill), "");
        Row(output, "live values/s (queries running)", Rate(s.Live), b is null ? "" : Rate(b.Live), Ratio(run, "live_ingest_rate_sketch_over_baseline"));
        Row(output, "live ack p50 / p99 ms", Latency(s.Live.Acks), b is null ? "" : Latency(b.Live.Acks), "");
        Row(output, "live cores: server / generator / others", Cores(s.Live.Cpu), b is null ? "" : Cores(b.Live.Cpu), "");
        Row(output, "live server CPU ns per value (with queries)", Ns(s.Live), b is null ? "" : Ns(b.Live), "");
        Row(output, "Summarize 1 h, one series: p50 / p99 ms", Latency(s.Queries.Summarize), b is null ? "" : Latency(b.Queries.Summarize), Ratio(run, "summarize_p99_baseline_over_sketch"));
        Row(output, "Timeline 6h at 1m, one series: p50 / p99 ms", Latency(s.Queries.Timeline), b is null ? "" : Latency(b.Queries.Timeline), Ratio(run, "timeline_p99_baseline_over_sketch"));
        Row(output, "queries answered (Summarize + Timeline)", Count(s.Queries), b is null ? "" : Count(b.Queries), "");
        Row(output, $"all series, 1 h ({s.Window.Values:N0} values): first / p50 ms", Window(s.Window), b is null ? "" : Window(b.Window), Ratio(run, "all_series_window_p50_baseline_over_sketch"));
        Row(output, "server CPU seconds (whole run)", F(s.ServerCpuSeconds, "0.0"), b is null ? "" : F(b.ServerCpuSeconds, "0.0"), "");
        Row(output, "RSS after back-fill (same values held)", Mb(s.FillRssBytes), b is null ? "" : Mb(b.FillRssBytes), Ratio(run, "rss_after_fill_baseline_over_sketch"));
        Row(output, "RSS after back-fill − RSS at start", Mb(s.FillRssBytes - s.StartRssBytes), b is null ? "" : Mb(b.FillRssBytes - b.StartRssBytes), Ratio(run, "fill_data_rss_baseline_over_sketch"));
        Row(output, "peak RSS (VmHWM, after live phase too)", Mb(s.PeakRssBytes), b is null ? "" : Mb(b.PeakRssBytes), Ratio(run, "peak_rss_baseline_over_sketch"));
        Row(output, "RSS at end − RSS at start", Mb(s.EndRssBytes - s.StartRssBytes), b is null ? "" : Mb(b.EndRssBytes - b.StartRssBytes), Ratio(run, "data_rss_baseline_over_sketch"));
        if (s.Store is { } store)
        {
            Row(output, "series / buckets held", $"{store.Series:N0} / {store.Buckets:N0}", "", "");
            Row(output, "estimated bytes per series / per bucket", $"{store.EstimatedBytesPerSeries:N0} / {store.EstimatedBytesPerBucket:N0}", "", "");
            Row(output, "RSS growth per bucket", $"{store.RssBytesPerBucket:N0} B", "", "");
        }

        if (s.Database is { } database)
        {
            Row(output, $"PostgreSQL commits/s: back-fill / live", $"{database.Fill.CommitsPerSecond:N0} / {database.Live.CommitsPerSecond:N0}", "", "");
            Row(output, $"log records: back-fill / live", $"{database.Fill.LogRows:N0} / {database.Live.LogRows:N0}", "", "");
            Row(output, $"WAL bytes per value: back-fill / live", $"{database.Fill.WalBytesPerValue:0.00} / {database.Live.WalBytesPerValue:0.00}", "", "");
            Row(output, $"log table bytes per value: back-fill / live", $"{database.Fill.LogTableBytesPerValue:0.00} / {database.Live.LogTableBytesPerValue:0.00}", "", "");
        }

        for (int i = 0; i < s.Checks.Count; i++)
        {
            var check = s.Checks[i].Result;
            string baselineCell = b is not null && i < b.Checks.Count ? $"{b.Checks[i].Result.ObservedRankError:0.00000}" : "";
            Row(output, $"rank error observed (ε reported): {Short(s.Checks[i].Window)}", $"{check.ObservedRankError:0.00000} ({check.ReportedRankError:0.00000})", baselineCell, check.IntervalsMissed == 0 ? "" : $"{check.IntervalsMissed} missed");
        }

        output.WriteLine();
        Errors(output, s);
        if (b is not null)
        {
            Errors(output, b);
        }
    }

    /// <summary>Writes the JSON report.</summary>
    public static void WriteJson(string path, RunFigures run) => File.WriteAllText(path, JsonSerializer.Serialize(run, Json));

    private static void Errors(TextWriter output, TargetFigures t)
    {
        if (t.Fill.Duplicates + t.Live.Duplicates > 0)
        {
            output.WriteLine($"{t.Target}: {t.Fill.Duplicates} back-fill and {t.Live.Duplicates} live batches answered as duplicates though each was sent once");
        }

        foreach (var (phase, errors, first) in new[] { ("back-fill", t.Fill.Errors, t.Fill.FirstError), ("live", t.Live.Errors, t.Live.FirstError), ("queries", t.Queries.Errors, t.Queries.FirstError) })
        {
            if (errors > 0)
            {
                output.WriteLine($"{t.Target}: {errors} errors in {phase}; first: {first}");
            }
        }
    }

    private static void Row(TextWriter output, string figure, string sketch, string baseline, string ratio) =>
        output.WriteLine($"| {figure,-46} | {sketch,-26} | {baseline,-26} | {ratio,-8} |");

    private static string Short(string window) => window.Replace(", last back-filled hour", "", StringComparison.Ordinal);

    private static string Rate(IngestPhase phase) => $"{phase.ValuesPerSecond / 1e6:0.00} M ({phase.Values / 1e6:0.0} M in {phase.Seconds:0.0} s)";

    private static string Ns(IngestPhase phase) => $"{phase.ServerCpuNsPerValue:N0}";

    private static string Latency(LatencySummary? latency) => latency is null ? "–" : $"{latency.P50Ms:0.00} / {latency.P99Ms:0.00}";

    private static string Count(LiveQueries queries) => $"{queries.Summarize?.Count ?? 0} + {queries.Timeline?.Count ?? 0}";

    private static string Window(WindowQuery window) => $"{window.FirstMs:0.0} / {window.Repeats?.P50Ms ?? 0:0.0}";

    private static string Cores(CpuShare cpu) => $"{cpu.ServerCores:0.00} / {cpu.GeneratorCores:0.00} / {cpu.OtherCores:0.00}";

    private static string Mb(long bytes) => $"{bytes / 1048576.0:N1} MB";

    private static string F(double value, string format) => value.ToString(format, CultureInfo.InvariantCulture);

    private static string Ratio(RunFigures run, string name) => run.Ratios.TryGetValue(name, out double r) ? $"{r:0.0}×" : "";

    private static double Divide(double? a, double? b) => a is { } x && b is { } y && y > 0 ? x / y : 0;
}
