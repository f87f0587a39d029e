namespace SummaryService.Server.Otlp;

/// <summary>The <c>Otlp</c> section: how OpenTelemetry metrics become series.</summary>
public sealed class OtlpSettings
{
    /// <summary>Configuration section name.</summary>
    public const string SectionName = "Otlp";

    /// <summary>Resource attributes that become labels when none are configured.</summary>
    public static readonly IReadOnlyList<string> DefaultResourceLabels = ["service.name", "service.instance.id", "deployment.environment"];

    /// <summary>
    /// Resource attributes that become labels (their names with every character other than a
    /// letter, digit or '_' turned into '_'). Everything else a resource carries (SDK name and
    /// version, host details) would multiply series without helping a query, so it is left out.
    /// Null means <see cref="DefaultResourceLabels"/>; an empty list takes none.
    /// </summary>
    public string[]? ResourceLabels { get; set; }

    /// <summary>
    /// Cumulative streams whose last point is remembered to turn the next one into a difference.
    /// Points of further streams are reported as rejected until the server restarts.
    /// </summary>
    public int MaxCumulativeStreams { get; set; } = 100_000;

    /// <summary>The allowlist in effect.</summary>
    public IReadOnlyList<string> EffectiveResourceLabels => ResourceLabels ?? DefaultResourceLabels;
}
