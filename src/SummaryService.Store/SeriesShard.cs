namespace SummaryService.Store;

/// <summary>One shard: its series and the lock that guards the dictionary and every change to them (each timeline is also locked for its own changes and copies).</summary>
internal sealed class SeriesShard
{
    public object Gate { get; } = new();

    public Dictionary<SeriesKey, SeriesTimeline> Series { get; } = [];

    /// <summary>Estimated bytes of every sketch in the shard: written under <see cref="Gate"/>, read without it for the budget check.</summary>
    public long EstimatedBytes;

    /// <summary>Log sequence number of the last batch applied to this shard.</summary>
    public ulong AppliedLsn { get; set; }
}
