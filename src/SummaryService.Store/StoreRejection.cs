namespace SummaryService.Store;

/// <summary>Why the store refused a batch or a query.</summary>
public enum RejectReason
{
    /// <summary>Metric name empty, too long or with characters outside the allowed set.</summary>
    InvalidMetric,

    /// <summary>Label name or value empty, too long or malformed.</summary>
    InvalidLabel,

    /// <summary>More labels than allowed.</summary>
    TooManyLabels,

    /// <summary>A value is NaN or infinite.</summary>
    NonFiniteValue,

    /// <summary>No values, more values than allowed, or a per-value time list of the wrong length.</summary>
    InvalidBatchSize,

    /// <summary>Timestamp before the store's retention.</summary>
    TooOld,

    /// <summary>Timestamp too far ahead of the store's clock.</summary>
    TooFarInFuture,

    /// <summary>The store or the tenant holds as many series as allowed.</summary>
    SeriesLimit,

    /// <summary>The store's memory budget is spent.</summary>
    MemoryLimit,

    /// <summary>A query window with from ≥ to.</summary>
    InvalidWindow,

    /// <summary>A query option out of range.</summary>
    InvalidQuery,

    /// <summary>An uploaded sketch that is empty or shaped differently from the store's.</summary>
    InvalidSketch,
}

/// <summary>
/// A batch or query the store refused. Nothing was changed. <see cref="Field"/> names the input
/// field at fault and the message gives the value.
/// </summary>
public sealed class StoreRejectedException(RejectReason reason, string field, string message) : Exception(message)
{
    /// <summary>Why.</summary>
    public RejectReason Reason { get; } = reason;

    /// <summary>The input field at fault, such as <c>values[3]</c> or <c>labels</c>.</summary>
    public string Field { get; } = field;

    /// <summary>True for limits (the input was valid but the store is full), false for bad input.</summary>
    public bool IsLimit => Reason is RejectReason.SeriesLimit or RejectReason.MemoryLimit;
}
