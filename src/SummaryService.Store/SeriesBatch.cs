namespace SummaryService.Store;

/// <summary>
/// Values for one series: either one timestamp for all of them, or one per value. A timestamp of 0
/// means "now" as the store's clock reads it.
/// </summary>
public sealed record SeriesBatch
{
    /// <summary>Metric name.</summary>
    public required string Metric { get; init; }

    /// <summary>Labels of the series.</summary>
    public IReadOnlyDictionary<string, string> Labels { get; init; } = new Dictionary<string, string>();

    /// <summary>The measurements.</summary>
    public ReadOnlyMemory<double> Values { get; init; }

    /// <summary>Timestamp of every value, Unix ms; 0 for now.</summary>
    public long TimeUnixMs { get; init; }

    /// <summary>One timestamp per value, or empty to use <see cref="TimeUnixMs"/>.</summary>
    public ReadOnlyMemory<long> ValueTimesUnixMs { get; init; }

    /// <summary>Producer identity for idempotent retries; empty when the producer does not retry.</summary>
    public string Producer { get; init; } = "";

    /// <summary>Per-producer sequence number, increasing; 0 when unused.</summary>
    public ulong Sequence { get; init; }
}
