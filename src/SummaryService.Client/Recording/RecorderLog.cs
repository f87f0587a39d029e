using Microsoft.Extensions.Logging;
using SummaryService.Readable;

namespace SummaryService.Client.Recording;

/// <summary>The recorder's log messages, generated so that a disabled level costs nothing.</summary>
internal static partial class RecorderLog
{
    [LoggerMessage(1, LogLevel.Warning, "SummaryService refused batch {Sequence} of {Series} ({Values} values): {ErrorCode} {Error}")]
    public static partial void BatchRejected(ILogger logger, ulong sequence, string series, long values, string errorCode, string error);

    /// <summary>Durations go out in the syntax people read everywhere else (<c>1.5s</c>, not <c>00:00:01.5000000</c>).</summary>
    public static void Reconnecting(ILogger logger, string reason, int unanswered, TimeSpan delay) =>
        Reconnecting(logger, reason, unanswered, DurationText.Format(delay));

    /// <inheritdoc cref="Reconnecting(ILogger, string, int, TimeSpan)"/>
    public static void Abandoned(ILogger logger, TimeSpan timeout, long values) => Abandoned(logger, DurationText.Format(timeout), values);

    [LoggerMessage(2, LogLevel.Warning, "Connection to SummaryService failed ({Reason}); {Unanswered} batches unanswered, retrying in {Delay}")]
    private static partial void Reconnecting(ILogger logger, string reason, int unanswered, string delay);

    [LoggerMessage(3, LogLevel.Error, "SummaryService refused the producer's credentials ({ErrorCode}: {Error}); {Batches} unanswered batches are given up")]
    public static partial void CredentialsRefused(ILogger logger, string errorCode, string error, int batches);

    [LoggerMessage(4, LogLevel.Warning, "Recorder disposal gave up after {Timeout}: {Values} values were never acknowledged")]
    private static partial void Abandoned(ILogger logger, string timeout, long values);

    [LoggerMessage(5, LogLevel.Error, "A BatchRejected handler threw")]
    public static partial void HandlerFailed(ILogger logger, Exception exception);
}
