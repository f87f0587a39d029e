namespace SummaryService.Client.Recording;

/// <summary>A batch (or sketch upload) the server refused; it is counted and not sent again.</summary>
public sealed class RejectedBatchEventArgs(string metric, IReadOnlyDictionary<string, string> labels, ulong sequence, long values, string errorCode, string error, string errorField) : EventArgs
{
    /// <summary>Metric of the refused series.</summary>
    public string Metric { get; } = metric;

    /// <summary>Labels of the refused series.</summary>
    public IReadOnlyDictionary<string, string> Labels { get; } = labels;

    /// <summary>The batch's sequence number.</summary>
    public ulong Sequence { get; } = sequence;

    /// <summary>Values lost with the batch.</summary>
    public long Values { get; } = values;

    /// <summary>The gRPC status name, for example <c>InvalidArgument</c> or <c>ResourceExhausted</c>.</summary>
    public string ErrorCode { get; } = errorCode;

    /// <summary>The server's message, naming the field and the value.</summary>
    public string Error { get; } = error;

    /// <summary>The field at fault, when the server named one.</summary>
    public string ErrorField { get; } = errorField;
}
