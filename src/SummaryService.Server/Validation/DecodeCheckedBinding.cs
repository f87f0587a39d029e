using System.Reflection;
using ServiceDescriptor = Google.Protobuf.Reflection.ServiceDescriptor;
using Grpc.Core;

namespace SummaryService.Server.Validation;

/// <summary>
/// Binds a generated service (named by its base class) with request decoders that answer a message
/// that cannot be decoded with InvalidArgument naming the message type and what was wrong.
/// </summary>
/// <remarks>
/// gRPC decodes a request before any interceptor or handler runs, so a decoding failure used to
/// leave the framework with a plain exception: the caller got UNKNOWN and the log a stack trace per
/// message. A service class opts in with
/// <c>[BindServiceMethod(typeof(DecodeCheckedBinding&lt;X.XBase&gt;), nameof(DecodeCheckedBinding&lt;X.XBase&gt;.BindService))]</c>;
/// gRPC, JSON transcoding and reflection then find the methods, and the service descriptor, here.
/// Everything else about the generated binding (names, marshalling of replies, handlers) is kept.
/// </remarks>
/// <typeparam name="TServiceBase">The generated service base class, such as <c>Ingest.IngestBase</c>.</typeparam>
public static class DecodeCheckedBinding<TServiceBase>
    where TServiceBase : class
{
    private static readonly Type Generated = typeof(TServiceBase).DeclaringType
        ?? throw new InvalidOperationException($"{typeof(TServiceBase)} is not nested in a generated service class.");

    private static readonly MethodInfo GeneratedBind = Generated.GetMethod("BindService", BindingFlags.Public | BindingFlags.Static, [typeof(ServiceBinderBase), typeof(TServiceBase)])
        ?? throw new InvalidOperationException($"{Generated} has no BindService(ServiceBinderBase, {typeof(TServiceBase).Name}).");

    /// <summary>The service's descriptor; JSON transcoding and reflection read it from the binding type.</summary>
    public static ServiceDescriptor Descriptor { get; } = (ServiceDescriptor)(Generated.GetProperty("Descriptor", BindingFlags.Public | BindingFlags.Static)?.GetValue(null)
        ?? throw new InvalidOperationException($"{Generated} has no static Descriptor."));

    /// <summary>Binds every method as the generated code does, with checked request decoders.</summary>
    public static void BindService(ServiceBinderBase serviceBinder, TServiceBase serviceImpl) =>
        GeneratedBind.Invoke(null, [new DecodeCheckingBinder(serviceBinder, Descriptor), serviceImpl]);
}
