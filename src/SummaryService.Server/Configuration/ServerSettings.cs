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
}
