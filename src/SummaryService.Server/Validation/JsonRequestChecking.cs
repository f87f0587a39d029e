using System.Net.Http.Headers;
using System.Text.Encodings.Web;
using System.Text.Json;
using Grpc.Core;
using Microsoft.AspNetCore.Grpc.JsonTranscoding;
using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Server.Diagnostics;

namespace SummaryService.Server.Validation;

/// <summary>
/// Middleware in front of the JSON routes: reads the body of a route that takes one, checks it with
/// <see cref="JsonBodyCheck"/> against the route's request message, and refuses it with the same
/// JSON status the routes use (HTTP 400, code InvalidArgument) naming the message, the field path
/// and the value. A body that passes goes on, rewound, to the transcoding reader.
/// </summary>
public sealed class JsonRequestChecking(RequestDelegate next, IOptions<ServerSettings> settings)
{
    /// <summary>Checks the body of a JSON route before it is transcoded.</summary>
    public async Task InvokeAsync(HttpContext context)
    {
        ArgumentNullException.ThrowIfNull(context);
        var route = context.GetEndpoint()?.Metadata.GetMetadata<GrpcJsonTranscodingMetadata>();
        if (route is null || route.HttpRule.Body != "*")
        {
            await next(context).ConfigureAwait(false);
            return;
        }

        string type = route.MethodDescriptor.InputType.Name;
        if (!IsUtf8Json(context.Request.ContentType, out bool json))
        {
            if (!json)
            {
                await RefuseAsync(context, StatusCode.InvalidArgument, $"The request body for {type} must be JSON (Content-Type: application/json); it was sent as '{context.Request.ContentType}'.").ConfigureAwait(false);
                return;
            }

            await next(context).ConfigureAwait(false); // another charset: the reader transcodes it and checks it itself
            return;
        }

        int limit = settings.Value.MaxMessageBytes;
        context.Request.EnableBuffering(bufferThreshold: 64 << 10, bufferLimit: limit + 1L);
        using var body = new MemoryStream();
        try
        {
            await context.Request.Body.CopyToAsync(body, context.RequestAborted).ConfigureAwait(false);
        }
        catch (IOException) when (body.Length > limit)
        {
            // The buffering limit stopped the read; refused below.
        }

        if (body.Length > limit)
        {
            await RefuseAsync(context, StatusCode.ResourceExhausted, $"The request body for {type} is larger than Server:MaxMessageBytes ({limit} bytes).").ConfigureAwait(false);
            return;
        }

        if (JsonBodyCheck.FindProblem(body.GetBuffer().AsMemory(0, (int)body.Length), route.MethodDescriptor.InputType) is { } problem)
        {
            await RefuseAsync(context, StatusCode.InvalidArgument, $"The request body for {type} was refused: {problem.TrimEnd('.')}.").ConfigureAwait(false);
            return;
        }

        context.Request.Body.Position = 0;
        await next(context).ConfigureAwait(false);
    }

    // JSON as the routes define it: application/json or a +json type; UTF-8 unless another charset is named.
    private static bool IsUtf8Json(string? contentType, out bool json)
    {
        json = MediaTypeHeaderValue.TryParse(contentType, out var media)
            && (string.Equals(media.MediaType, "application/json", StringComparison.OrdinalIgnoreCase) || media.MediaType?.EndsWith("+json", StringComparison.OrdinalIgnoreCase) == true);
        return json && (media!.CharSet is null || string.Equals(media.CharSet.Trim('"'), "utf-8", StringComparison.OrdinalIgnoreCase));
    }

    private static async Task RefuseAsync(HttpContext context, StatusCode code, string message)
    {
        string safe = WireText.Message(message);
        context.Items[RefusalLog.DetailItem] = safe;
        context.Response.StatusCode = code == StatusCode.ResourceExhausted ? StatusCodes.Status429TooManyRequests : StatusCodes.Status400BadRequest;
        context.Response.ContentType = "application/json; charset=utf-8";
        await JsonSerializer.SerializeAsync(context.Response.Body, new JsonStatus((int)code, safe, []), JsonStatus.Options, context.RequestAborted).ConfigureAwait(false);
    }

    /// <summary>The error body the JSON routes use: google.rpc.Status in JSON.</summary>
    private sealed record JsonStatus(int Code, string Message, object[] Details)
    {
        public static readonly JsonSerializerOptions Options = new(JsonSerializerDefaults.Web) { Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };
    }
}
