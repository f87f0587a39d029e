using Grpc.Core;
using SummaryService.Sketches.Serialization;
using SummaryService.Store;

namespace SummaryService.Server.Validation;

/// <summary>How refusals become gRPC statuses: limits are ResourceExhausted, bad input InvalidArgument; the message names field and value, made safe by <see cref="WireText"/>.</summary>
public static class RpcErrors
{
    /// <summary>Trailer carrying the input field at fault.</summary>
    public const string FieldTrailer = "summary-field";

    /// <summary>The status code of a store refusal.</summary>
    public static StatusCode CodeOf(StoreRejectedException rejection)
    {
        ArgumentNullException.ThrowIfNull(rejection);
        return rejection.IsLimit ? StatusCode.ResourceExhausted : StatusCode.InvalidArgument;
    }

    /// <summary>The exception a store refusal is reported as.</summary>
    public static RpcException From(StoreRejectedException rejection)
    {
        ArgumentNullException.ThrowIfNull(rejection);
        return new RpcException(new Status(CodeOf(rejection), WireText.Message(rejection.Message)), new Metadata { { FieldTrailer, WireText.Field(rejection.Field) } });
    }

    /// <summary>The exception a malformed uploaded sketch is reported as.</summary>
    public static RpcException From(SketchFormatException malformed)
    {
        ArgumentNullException.ThrowIfNull(malformed);
        return new RpcException(new Status(StatusCode.InvalidArgument, WireText.Message($"sketch is malformed: {malformed.Message}")), new Metadata { { FieldTrailer, "sketch" } });
    }

    /// <summary>InvalidArgument naming the field.</summary>
    public static RpcException Invalid(string field, string message) =>
        new(new Status(StatusCode.InvalidArgument, WireText.Message(message)), new Metadata { { FieldTrailer, WireText.Field(field) } });

    /// <summary>NotFound naming what was looked for.</summary>
    public static RpcException NotFound(string field, string message) =>
        new(new Status(StatusCode.NotFound, WireText.Message(message)), new Metadata { { FieldTrailer, WireText.Field(field) } });
}
