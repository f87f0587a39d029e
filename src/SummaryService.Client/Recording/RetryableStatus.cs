using Grpc.Core;

namespace SummaryService.Client.Recording;

/// <summary>Which call failures are worth trying again with the same uploads.</summary>
internal static class RetryableStatus
{
    /// <summary>
    /// Failures of the connection or the server's availability: the upload may or may not have been
    /// applied, and resending it under the same sequence is safe. Everything else is an answer about the
    /// upload or the caller (bad input, limits, credentials) that a resend would only repeat.
    /// </summary>
    public static bool IsRetryable(StatusCode code) => code is StatusCode.Unavailable
        or StatusCode.DeadlineExceeded
        or StatusCode.Internal
        or StatusCode.Unknown
        or StatusCode.Cancelled
        or StatusCode.Aborted
        or StatusCode.OK;
}
