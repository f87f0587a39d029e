namespace SummaryService.Server.Configuration;

/// <summary>The <c>Server</c> section: limits of the gRPC edge.</summary>
public sealed class ServerSettings
{
    /// <summary>Configuration section name.</summary>
    public const string SectionName = "Server";

    /// <summary>Largest request or reply message in bytes; larger ones fail with ResourceExhausted before any work is done.</summary>
    public int MaxMessageBytes { get; set; } = 16 << 20;

    /// <summary>Most steps one Timeline call may ask for.</summary>
    public int MaxTimelineSteps { get; set; } = 10_000;

    /// <summary>
    /// How long a watch waits for its caller to take one update; past it the watch ends with
    /// ResourceExhausted, so a reader that stopped reading holds no timer, query or buffer for long.
    /// </summary>
    public DurationSetting WatchMaxLag { get; set; } = TimeSpan.FromSeconds(30);

    /// <summary>Time between a watch's updates when the request gives none.</summary>
    public DurationSetting WatchInterval { get; set; } = TimeSpan.FromSeconds(5);

    /// <summary>Shortest time between a watch's updates a request may ask for: each update is a full window query.</summary>
    public DurationSetting WatchMinInterval { get; set; } = TimeSpan.FromMilliseconds(100);

    /// <summary>Bytes of batches held across all callers between reading and answering them; see <see cref="Services.IngestBudget"/>.</summary>
    public long MaxIngestBytesHeld { get; set; } = 256L << 20;

    /// <summary>Refused calls are logged per client at most once per this interval, with counts.</summary>
    public DurationSetting RefusalLogInterval { get; set; } = TimeSpan.FromSeconds(10);
}
