using ServiceDescriptor = Google.Protobuf.Reflection.ServiceDescriptor;
using Grpc.Core;

namespace SummaryService.Server.Validation;

/// <summary>
/// Passes each method on to the real binder with a request marshaller whose decoder turns any
/// decoding failure into InvalidArgument: "Batch (57 bytes) could not be decoded: …".
/// </summary>
internal sealed class DecodeCheckingBinder(ServiceBinderBase inner, ServiceDescriptor service) : ServiceBinderBase
{
    public override void AddMethod<TRequest, TResponse>(Method<TRequest, TResponse> method, UnaryServerMethod<TRequest, TResponse>? handler) =>
        inner.AddMethod(Checked(method), handler);

    public override void AddMethod<TRequest, TResponse>(Method<TRequest, TResponse> method, ClientStreamingServerMethod<TRequest, TResponse>? handler) =>
        inner.AddMethod(Checked(method), handler);

    public override void AddMethod<TRequest, TResponse>(Method<TRequest, TResponse> method, ServerStreamingServerMethod<TRequest, TResponse>? handler) =>
        inner.AddMethod(Checked(method), handler);

    public override void AddMethod<TRequest, TResponse>(Method<TRequest, TResponse> method, DuplexStreamingServerMethod<TRequest, TResponse>? handler) =>
        inner.AddMethod(Checked(method), handler);

    private Method<TRequest, TResponse> Checked<TRequest, TResponse>(Method<TRequest, TResponse> method)
        where TRequest : class
        where TResponse : class
    {
        string typeName = service.FindMethodByName(method.Name)?.InputType.Name ?? typeof(TRequest).Name;
        Marshaller<TRequest> original = method.RequestMarshaller;
        var checkedMarshaller = new Marshaller<TRequest>(original.ContextualSerializer, context => Decode(original, context, typeName));
        return new Method<TRequest, TResponse>(method.Type, method.ServiceName, method.Name, checkedMarshaller, method.ResponseMarshaller);
    }

    private static T Decode<T>(Marshaller<T> original, DeserializationContext context, string typeName)
    {
        try
        {
            return original.ContextualDeserializer(context);
        }
        catch (Exception ex) when (ex is not OperationCanceledException)
        {
            // Whatever the parser objects to (truncation, a bad wire type, invalid UTF-8, nesting too
            // deep) lies in the caller's bytes; its message says which.
            throw new RpcException(new Status(StatusCode.InvalidArgument, WireText.Message($"{typeName} ({context.PayloadLength} bytes) could not be decoded: {ex.Message}")));
        }
    }
}
