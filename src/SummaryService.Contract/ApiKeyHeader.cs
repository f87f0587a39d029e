using Grpc.Core;
using Grpc.Core.Interceptors;

namespace SummaryService.Contract;

/// <summary>
/// Adds <c>authorization: Bearer &lt;key&gt;</c> to every call's metadata. A header interceptor is
/// used rather than <see cref="CallCredentials"/> because call credentials are withheld on plaintext
/// channels unless the channel was built with <c>UnsafeUseInsecureChannelCallCredentials</c>, which a
/// borrowed channel may not have; the embedded server listens in plaintext on loopback. Lives with the
/// contract so that every .NET caller (client library, command-line tool) sends the key the same way.
/// </summary>
public static class ApiKeyHeader
{
    /// <summary>The header the server reads the key from.</summary>
    public const string Name = "authorization";

    /// <summary>The invoker that sends the key, or the channel's own when there is no key.</summary>
    public static CallInvoker Wrap(CallInvoker invoker, string? apiKey)
    {
        if (string.IsNullOrEmpty(apiKey))
        {
            return invoker;
        }

        string value = "Bearer " + apiKey;
        return invoker.Intercept(metadata =>
        {
            metadata.Add(Name, value);
            return metadata;
        });
    }
}
