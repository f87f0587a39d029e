using SummaryService.LoadTest.Accuracy;
using SummaryService.LoadTest.Driving;

namespace SummaryService.LoadTest.Report;

/// <summary>One ingest phase of one target.</summary>
/// <param name="Values">Values acknowledged.</param>
/// <param name="Seconds">Wall time from the first write to the last reply.</param>
/// <param name="Acks">Acknowledgement latency per batch.</param>
/// <param name="Errors">Error replies.</param>
/// <param name="FirstError">The first error reply, if any.</param>
/// <param name="Cpu">Where the CPU went during the phase.</param>
public sealed record IngestPhase(long Values, double Seconds, LatencySummary? Acks, long Errors, string? FirstError, CpuShare Cpu)
{
    /// <summary>Values acknowledged per second.</summary>
    public double ValuesPerSecond => Seconds > 0 ? Values / Seconds : 0;

    /// <summary>Server CPU time per value acknowledged: the cost a busy machine inflates least.</summary>
    public double ServerCpuNsPerValue => Values > 0 ? Cpu.ServerCpuSeconds * 1e9 / Values : 0;

    /// <summary>Batches answered as duplicates though the generator sent each once (so their values were not applied).</summary>
    public long Duplicates { get; init; }
}

/// <summary>Cores in use during a phase: the server under test, this generator, and everything else on the machine.</summary>
public sealed record CpuShare(double ServerCores, double GeneratorCores, double OtherCores, double ServerCpuSeconds);

/// <summary>Latencies of the queries that ran during the live phase.</summary>
public sealed record LiveQueries(LatencySummary? Summarize, LatencySummary? Timeline, long Errors, string? FirstError);

/// <summary>The all-series query over the last back-filled hour, repeated.</summary>
/// <param name="Values">Values in the window (what the answer counted).</param>
/// <param name="FirstMs">The first answer (builds the server's cached blocks).</param>
/// <param name="Repeats">Every answer.</param>
public sealed record WindowQuery(long Values, double FirstMs, LatencySummary? Repeats);

/// <summary>A rank check with what it looked at.</summary>
public sealed record NamedCheck(string Window, RankCheckResult Result);

/// <summary>Store figures from Admin.Holdings and the process.</summary>
public sealed record StoreFigures(long Series, long Buckets, long EstimatedBytes, double EstimatedBytesPerSeries, double EstimatedBytesPerBucket, double RssBytesPerBucket);

/// <summary>Everything measured on one target.</summary>
public sealed record TargetFigures(
    string Target,
    long StartRssBytes,
    long FillRssBytes,
    IngestPhase Fill,
    IngestPhase Live,
    LiveQueries Queries,
    WindowQuery Window,
    IReadOnlyList<NamedCheck> Checks,
    long PeakRssBytes,
    long EndRssBytes,
    double ServerCpuSeconds,
    StoreFigures? Store)
{
    /// <summary>Server processes sharing the load (the nodes of a cluster; 1 otherwise). CPU and memory figures are their sums.</summary>
    public int Nodes { get; init; } = 1;

    /// <summary>What the ingest phases cost the cluster's PostgreSQL; null outside Orleans mode.</summary>
    public DatabaseFigures? Database { get; init; }
}

/// <summary>The cluster database's share of the back-fill and of the live phase.</summary>
public sealed record DatabaseFigures(SummaryService.LoadTest.Processes.PostgresPhase Fill, SummaryService.LoadTest.Processes.PostgresPhase Live);

/// <summary>The machine the run shared.</summary>
public sealed record MachineFigures(int Cores, double LoadAverageAtStart, string Runtime, string StartedUtc);

/// <summary>The whole run.</summary>
public sealed record RunFigures(string Command, MachineFigures Machine, TargetFigures Sketch, TargetFigures? Baseline, IReadOnlyDictionary<string, double> Ratios);
