using Docker.DotNet;
using DotNet.Testcontainers.Configurations;

namespace SummaryService.Container.Tests.Support;

/// <summary>
/// The Docker engine the tests use, found the way Testcontainers finds it (DOCKER_HOST, the local
/// socket; an engine older than Testcontainers' default API needs DOCKER_API_VERSION, as .ci/run sets).
/// </summary>
internal static class DockerEngine
{
    /// <summary>Set to 1 (as .ci/run does) and a missing engine fails the image tests instead of skipping them.</summary>
    public const string RequiredVariable = "SUMMARYSERVICE_REQUIRE_DOCKER";

    private static readonly Lazy<string?> Problem = new(FindProblem);

    /// <summary>True when the environment says the image tests must run.</summary>
    public static bool Required => Environment.GetEnvironmentVariable(RequiredVariable) is "1" or "true";

    /// <summary>Why no engine can be used, or null when one answers.</summary>
    public static string? WhyUnreachable => Problem.Value;

    /// <summary>A client of the engine, for what Testcontainers does not offer (sending SIGKILL, reading image settings).</summary>
    public static DockerClient CreateClient() =>
        Endpoint()?.GetDockerClientBuilder(Guid.NewGuid()).Build()
        ?? throw new InvalidOperationException($"No Docker engine: {WhyUnreachable}");

    private static IDockerEndpointAuthenticationConfiguration? Endpoint() => TestcontainersSettings.OS.DockerEndpointAuthConfig;

    private static string? FindProblem()
    {
        if (Endpoint() is null)
        {
            return $"Testcontainers found no Docker engine (DOCKER_HOST='{Environment.GetEnvironmentVariable("DOCKER_HOST")}', " +
                $"DOCKER_API_VERSION='{Environment.GetEnvironmentVariable("DOCKER_API_VERSION")}'; an engine older than API 1.44 needs DOCKER_API_VERSION=1.41)";
        }

        try
        {
            using DockerClient client = CreateClient();
            using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(10));
            client.System.PingAsync(timeout.Token).GetAwaiter().GetResult();
            return null;
        }
        catch (Exception e) when (e is DockerApiException or HttpRequestException or IOException or OperationCanceledException or TimeoutException)
        {
            return $"the Docker engine did not answer a ping: {e.Message}";
        }
    }
}
