using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;

namespace SummaryService.Server.Hosting;

/// <summary>
/// <c>SummaryService.Server --probe [URL]</c>: asks a running server's standard gRPC health service
/// whether it is serving and exits 0 (serving) or 1 (anything else). It exists so that a container
/// health check needs no client shipped beside the server: the image runs its own binary in this
/// mode. Without a URL it reads the same configuration the server reads (the app folder's
/// <c>appsettings.json</c>, environment variables, command line) and calls the gRPC endpoint
/// (<c>Kestrel:Endpoints:Grpc:Url</c>), with a wildcard host replaced by loopback.
/// </summary>
public static class HealthProbe
{
    /// <summary>The command-line switch that selects probe mode.</summary>
    public const string Switch = "--probe";

    private static readonly TimeSpan Deadline = TimeSpan.FromSeconds(3);

    /// <summary>True when the first argument asks for probe mode.</summary>
    public static bool IsRequested(IReadOnlyList<string> args)
    {
        ArgumentNullException.ThrowIfNull(args);
        return args.Count > 0 && args[0] == Switch;
    }

    /// <summary>Runs one probe and returns the process exit code: 0 serving, 1 not serving or unreachable, 2 no address.</summary>
    /// <param name="args">The command line: <c>--probe</c>, optionally a URL, then configuration overrides.</param>
    /// <param name="configuration">The server's configuration, for the gRPC endpoint when no URL is given.</param>
    public static async Task<int> RunAsync(IReadOnlyList<string> args, IConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(args);
        ArgumentNullException.ThrowIfNull(configuration);
        string? url = ExplicitUrl(args) ?? configuration["Kestrel:Endpoints:Grpc:Url"];
        if (url is null || !Uri.TryCreate(ToLoopback(url), UriKind.Absolute, out Uri? address))
        {
            await Console.Error.WriteLineAsync($"No gRPC endpoint to probe: give a URL after {Switch} or set Kestrel:Endpoints:Grpc:Url (now '{url}').").ConfigureAwait(false);
            return 2;
        }

        using GrpcChannel channel = GrpcChannel.ForAddress(address);
        try
        {
            HealthCheckResponse reply = await new Health.HealthClient(channel)
                .CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.Add(Deadline)).ConfigureAwait(false);
            Console.WriteLine($"{reply.Status} at {address}");
            return reply.Status == HealthCheckResponse.Types.ServingStatus.Serving ? 0 : 1;
        }
        catch (RpcException e)
        {
            Console.WriteLine($"No answer from {address}: {e.StatusCode} {e.Status.Detail}");
            return 1;
        }
    }

    /// <summary>The arguments the host should see: everything after the switch and its URL.</summary>
    public static string[] HostArguments(IReadOnlyList<string> args)
    {
        ArgumentNullException.ThrowIfNull(args);
        return [.. args.Skip(ExplicitUrl(args) is null ? 1 : 2)];
    }

    private static string? ExplicitUrl(IReadOnlyList<string> args) =>
        args.Count > 1 && args[1].Contains("://", StringComparison.Ordinal) ? args[1] : null;

    /// <summary>A listening address such as <c>http://0.0.0.0:5170</c> or <c>http://+:5170</c> is reached over loopback.</summary>
    internal static string ToLoopback(string url)
    {
        foreach (string wildcard in new[] { "0.0.0.0", "[::]", "*", "+" })
        {
            url = url.Replace("://" + wildcard + ":", "://127.0.0.1:", StringComparison.Ordinal);
        }

        return url;
    }
}
