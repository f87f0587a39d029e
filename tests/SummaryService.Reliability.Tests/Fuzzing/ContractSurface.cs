using System.Reflection;
using Google.Api;
using Google.Protobuf.Reflection;
using SummaryService.Contract.V1;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>One RPC of the public contract, found through the generated descriptors rather than by name.</summary>
internal sealed record ContractMethod(MethodDescriptor Descriptor)
{
    /// <summary>The gRPC path, <c>/package.Service/Method</c>.</summary>
    public string Path => $"/{Descriptor.Service.FullName}/{Descriptor.Name}";

    public MessageDescriptor Input => Descriptor.InputType;

    public bool StreamsRequests => Descriptor.IsClientStreaming;

    public bool StreamsReplies => Descriptor.IsServerStreaming;

    /// <summary>The google.api.http route of the method, if it has one.</summary>
    public HttpRule? Route => Descriptor.GetOptions()?.GetExtension(AnnotationsExtensions.Http);

    public override string ToString() => Path;
}

/// <summary>
/// Every service and method of the contract, by reflection over the generated code: each service
/// class carries a static <c>Descriptor</c>. Renamed or added RPCs are fuzzed without edits here.
/// </summary>
internal static class ContractSurface
{
    public static IReadOnlyList<ServiceDescriptor> Services { get; } = typeof(Batch).Assembly.GetTypes()
        .Select(type => type.GetProperty("Descriptor", BindingFlags.Public | BindingFlags.Static))
        .Where(property => property?.PropertyType == typeof(ServiceDescriptor))
        .Select(property => (ServiceDescriptor)property!.GetValue(null)!)
        .OrderBy(service => service.FullName, StringComparer.Ordinal)
        .ToArray();

    public static IReadOnlyList<ContractMethod> Methods { get; } = Services
        .SelectMany(service => service.Methods)
        .Select(method => new ContractMethod(method))
        .ToArray();
}
