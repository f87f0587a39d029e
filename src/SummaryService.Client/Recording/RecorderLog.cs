using Microsoft.Extensions.Logging;

namespace SummaryService.Client.Recording;

/// <summary>The recorder's log messages, generated so that a disabled level costs nothing.</summary>
internal static partial class RecorderLog
{
    [LoggerMessage(1, LogLevel.Warning, "SummaryService refused batch {Sequence} of {Metric} ({Values} values): {ErrorCode} {Error}")]
    public static partial void BatchRejected(ILogger logger, ulong sequence, string metric, long values, string errorCode, string error);

    [LoggerMessage(2, LogLevel.Warning, "Connection to SummaryService failed ({Reason}); {Unanswered} batches unanswered, retrying in {Delay}")]
    public static partial void Reconnecting(ILogger logger, string reason, int unanswered, TimeSpan delay);

    [LoggerMessage(3, LogLevel.Error, "SummaryService refused the producer's credentials ({ErrorCode}: {Error}); {Batches} unanswered batches are given up")]
    public static partial void CredentialsRefused(ILogger logger, string errorCode, string error, int batches);

    [LoggerMessage(4, LogLevel.Warning, "Recorder disposal gave up after {Timeout}: {Values} values were never acknowledged")]
    public static partial void Abandoned(ILogger logger, TimeSpan timeout, long values);

    [LoggerMessage(5, LogLevel.Error, "A BatchRejected handler threw")]
    public static partial void HandlerFailed(ILogger logger, Exception exception);
}
