using System.Globalization;
using Microsoft.AspNetCore.Http.Features;
using SummaryService.Server.Auth;

namespace SummaryService.Server.Diagnostics;

/// <summary>
/// Middleware that reads how every call ended — the gRPC status in the trailers (or, for a call
/// refused before its first reply, in the headers), or the HTTP status of a JSON route — and hands
/// refusals and failures to the <see cref="RefusalLog"/>. One place sees every refusal, including
/// requests refused before any service code runs (undecodable messages, unknown keys).
/// </summary>
public sealed class CallOutcomeLogging(RequestDelegate next, RefusalLog refusals)
{
    /// <summary>Runs the call, then records its outcome unless it succeeded or the caller hung up.</summary>
    public async Task InvokeAsync(HttpContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        await next(context).ConfigureAwait(false);
        var (outcome, detail) = OutcomeOf(context);
        if (outcome is not null)
        {
            refusals.Refused(ClientOf(context), $"{context.Request.Method} {context.Request.Path}", outcome, detail);
        }
    }

    private static (string? Outcome, string Detail) OutcomeOf(HttpContext context)
    {
        HttpResponse response = context.Response;
        if (response.ContentType?.StartsWith("application/grpc", StringComparison.Ordinal) == true)
        {
            var trailers = context.Features.Get<IHttpResponseTrailersFeature>()?.Trailers;
            string? status = trailers?["grpc-status"].FirstOrDefault() ?? response.Headers["grpc-status"].FirstOrDefault();
            string message = trailers?["grpc-message"].FirstOrDefault() ?? response.Headers["grpc-message"].FirstOrDefault() ?? "";
            if (status is null || !int.TryParse(status, NumberStyles.None, CultureInfo.InvariantCulture, out int code))
            {
                return (null, "");
            }

            // OK, and calls the caller cancelled or let run past its own deadline, are not refusals.
            var statusCode = (Grpc.Core.StatusCode)code;
            return statusCode is Grpc.Core.StatusCode.OK or Grpc.Core.StatusCode.Cancelled or Grpc.Core.StatusCode.DeadlineExceeded
                ? (null, "")
                : (statusCode.ToString(), Uri.UnescapeDataString(message));
        }

        return response.StatusCode >= 400 && !context.RequestAborted.IsCancellationRequested
            ? ($"HTTP {response.StatusCode}", context.Items.TryGetValue(RefusalLog.DetailItem, out object? refusal) ? refusal as string ?? "" : "")
            : (null, "");
    }

    private static string ClientOf(HttpContext context)
    {
        string address = context.Connection.RemoteIpAddress?.ToString() ?? "an unknown address";
        return CallerAccess.Attached(context.Items) is { } caller ? $"{address} (key '{caller.Name}')" : address;
    }
}
