using System.IO.Compression;
using System.Net.Http.Headers;
using Google.Protobuf;
using Grpc.Core;
using Microsoft.Extensions.Options;
using SummaryService.Contract.Otlp.Collector;
using SummaryService.Server.Auth;
using SummaryService.Server.Configuration;
using SummaryService.Server.Diagnostics;
using SummaryService.Server.Validation;

namespace SummaryService.Server.Otlp;

/// <summary>
/// OTLP/HTTP metrics in: <c>POST /v1/metrics</c> with a binary protobuf (<c>application/x-protobuf</c>)
/// or OTLP/JSON (<c>application/json</c>) body, optionally gzip-compressed. The reply uses the
/// request's encoding: the export response on success, a google.rpc.Status otherwise, with the HTTP
/// status the protocol names (400 bad request, 401/403 auth, 429 overload, 503 unavailable).
/// </summary>
/// <remarks>
/// OTLP/JSON asks receivers to ignore unknown fields (newer senders add fields), so unlike the
/// summary routes this one skips them. Its 64-bit integers may be strings or numbers and its enums
/// integers, which the protobuf JSON reader accepts as they are.
/// </remarks>
public static class OtlpHttpEndpoint
{
    /// <summary>The route the OTLP/HTTP exporters post metrics to.</summary>
    public const string Route = "/v1/metrics";

    private const string ProtobufType = "application/x-protobuf";
    private const string JsonType = "application/json";
    private static readonly JsonParser Parser = new(JsonParser.Settings.Default.WithIgnoreUnknownFields(true));

    /// <summary>Maps the route.</summary>
    public static IEndpointRouteBuilder MapOtlpHttp(this IEndpointRouteBuilder endpoints)
    {
        ArgumentNullException.ThrowIfNull(endpoints);
        endpoints.MapPost(Route, ExportAsync);
        return endpoints;
    }

    private static async Task ExportAsync(HttpContext context, OtlpReceiver receiver, ApiKeyRegistry registry, IOptions<ServerSettings> settings)
    {
        bool json = IsJson(context.Request.ContentType, out bool known);
        try
        {
            if (!known)
            {
                throw new RpcException(new Status(StatusCode.InvalidArgument, $"Content-Type is '{context.Request.ContentType}'; send {ProtobufType} or {JsonType}."));
            }

            CallerAccess access = Authenticate(context, registry);
            byte[] body = await ReadBodyAsync(context, settings.Value.MaxMessageBytes).ConfigureAwait(false);
            ExportMetricsServiceRequest request = Decode(body, json);
            ExportMetricsServiceResponse response = await receiver.ExportAsync(request, access, context.RequestAborted).ConfigureAwait(false);
            await WriteAsync(context, StatusCodes.Status200OK, response, json).ConfigureAwait(false);
        }
        catch (RpcException ex)
        {
            string message = WireText.Message(ex.Status.Detail);
            context.Items[RefusalLog.DetailItem] = message;
            var status = new Google.Rpc.Status { Code = (int)ex.StatusCode, Message = message };
            await WriteAsync(context, HttpStatusOf(ex.StatusCode), status, json).ConfigureAwait(false);
        }
    }

    private static CallerAccess Authenticate(HttpContext context, ApiKeyRegistry registry)
    {
        if (!registry.Enabled)
        {
            return CallerAccess.Unrestricted;
        }

        string? header = context.Request.Headers.Authorization;
        if (header is null || !header.StartsWith("Bearer ", StringComparison.OrdinalIgnoreCase) || header.Length <= 7)
        {
            throw new RpcException(new Status(StatusCode.Unauthenticated, "authorization header missing; send 'Authorization: Bearer <key>'."));
        }

        return registry.Find(header[7..].Trim()) ?? throw new RpcException(new Status(StatusCode.Unauthenticated, "the API key is not known to this server."));
    }

    private static async Task<byte[]> ReadBodyAsync(HttpContext context, int limit)
    {
        Stream source = context.Request.Body;
        string? encoding = context.Request.Headers.ContentEncoding;
        bool gzip = string.Equals(encoding, "gzip", StringComparison.OrdinalIgnoreCase);
        if (!gzip && !string.IsNullOrEmpty(encoding) && !string.Equals(encoding, "identity", StringComparison.OrdinalIgnoreCase))
        {
            throw new RpcException(new Status(StatusCode.InvalidArgument, $"Content-Encoding is '{encoding}'; send gzip or none."));
        }

        await using Stream reading = gzip ? new GZipStream(source, CompressionMode.Decompress, leaveOpen: true) : source;
        using var body = new MemoryStream();
        byte[] chunk = new byte[64 << 10];
        try
        {
            int read;
            while ((read = await reading.ReadAsync(chunk, context.RequestAborted).ConfigureAwait(false)) > 0)
            {
                if (body.Length + read > limit)
                {
                    throw new RpcException(new Status(StatusCode.ResourceExhausted, $"the request body is larger than Server:MaxMessageBytes ({limit} bytes)."));
                }

                body.Write(chunk, 0, read);
            }
        }
        catch (InvalidDataException ex)
        {
            throw new RpcException(new Status(StatusCode.InvalidArgument, $"the gzip body cannot be read: {ex.Message}"));
        }

        return body.ToArray();
    }

    private static ExportMetricsServiceRequest Decode(byte[] body, bool json)
    {
        string type = ExportMetricsServiceRequest.Descriptor.Name;
        try
        {
            return json ? Parser.Parse<ExportMetricsServiceRequest>(new StreamReader(new MemoryStream(body))) : ExportMetricsServiceRequest.Parser.ParseFrom(body);
        }
        catch (Exception ex) when (ex is InvalidProtocolBufferException or InvalidJsonException or FormatException or OverflowException)
        {
            throw new RpcException(new Status(StatusCode.InvalidArgument, $"the body is not a valid {type} in {(json ? "OTLP/JSON" : "protobuf")}: {ex.Message}"));
        }
    }

    private static async Task WriteAsync(HttpContext context, int statusCode, IMessage message, bool json)
    {
        context.Response.StatusCode = statusCode;
        if (json)
        {
            context.Response.ContentType = JsonType;
            await context.Response.WriteAsync(JsonFormatter.Default.Format(message), context.RequestAborted).ConfigureAwait(false);
            return;
        }

        context.Response.ContentType = ProtobufType;
        await context.Response.Body.WriteAsync(message.ToByteArray(), context.RequestAborted).ConfigureAwait(false);
    }

    private static bool IsJson(string? contentType, out bool known)
    {
        known = MediaTypeHeaderValue.TryParse(contentType, out var media);
        string? type = media?.MediaType;
        bool json = string.Equals(type, JsonType, StringComparison.OrdinalIgnoreCase);
        known = json || string.Equals(type, ProtobufType, StringComparison.OrdinalIgnoreCase);
        return json;
    }

    private static int HttpStatusOf(StatusCode code) => code switch
    {
        StatusCode.InvalidArgument => StatusCodes.Status400BadRequest,
        StatusCode.Unauthenticated => StatusCodes.Status401Unauthorized,
        StatusCode.PermissionDenied => StatusCodes.Status403Forbidden,
        StatusCode.ResourceExhausted => StatusCodes.Status429TooManyRequests,
        StatusCode.Unavailable => StatusCodes.Status503ServiceUnavailable,
        _ => StatusCodes.Status500InternalServerError,
    };
}
