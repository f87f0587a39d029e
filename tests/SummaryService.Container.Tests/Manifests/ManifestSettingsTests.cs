using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using SummaryService.Container.Tests.Support;
using SummaryService.Contract;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Container.Tests.Manifests;

/// <summary>The settings the Kubernetes manifests give the server, applied to the real server process.</summary>
public sealed class ManifestSettingsTests
{
    [Fact]
    public async Task The_config_map_and_example_keys_start_the_server_whose_health_service_answers_the_probes_and_whose_keys_work()
    {
        using var data = new TempDirectory();

        // The pod's settings as they reach its environment; only its listening addresses become
        // free loopback ports and its volume a scratch folder.
        var environment = KubernetesFiles.ConfigMap.Concat(KubernetesFiles.ExampleKeys)
            .Where(setting => !setting.Key.StartsWith("Kestrel__Endpoints__", StringComparison.Ordinal))
            .ToDictionary(setting => setting.Key, setting => setting.Value, StringComparer.Ordinal);
        environment["Persistence__DataDirectory"] = data.Path;
        await using var server = await ServerProcess.StartAsync(environment);
        using var channel = GrpcChannel.ForAddress(server.Address);

        // What the kubelet's gRPC probes call: Health/Check for the probe's service, no key needed.
        foreach (string probe in new[] { "startupProbe", "readinessProbe", "livenessProbe" })
        {
            string service = Yaml.TextOrNull(KubernetesFiles.Server, probe, "grpc", "service") ?? "";
            var reply = await new Health.HealthClient(channel).CheckAsync(new HealthCheckRequest { Service = service });
            Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, reply.Status);
        }

        // Authentication is on, with the keys of the example file (its comment names them).
        var batch = new Batch { Metric = "depot.k8s.weight", Values = { 4.5, 5.5 } };
        var anonymous = await Assert.ThrowsAsync<RpcException>(() => new Ingest.IngestClient(channel).PushAsync(batch).ResponseAsync);
        Assert.Equal(StatusCode.Unauthenticated, anonymous.StatusCode);
        Assert.Equal(2UL, (await new Ingest.IngestClient(WithKey(channel, "otterbyte-example-ingest")).PushAsync(batch)).Accepted);

        var summarize = new NumberedBatches("depot.k8s.weight", "unused", 1).LastHour();
        var denied = await Assert.ThrowsAsync<RpcException>(() => new Query.QueryClient(WithKey(channel, "otterbyte-example-ingest")).SummarizeAsync(summarize).ResponseAsync);
        Assert.Equal(StatusCode.PermissionDenied, denied.StatusCode);
        var summary = await new Query.QueryClient(WithKey(channel, "otterbyte-example-dashboard")).SummarizeAsync(summarize);
        Assert.Equal(2UL, Assert.Single(summary.Groups).Summary.Count);
    }

    private static CallInvoker WithKey(GrpcChannel channel, string key) => ApiKeyHeader.Wrap(channel.CreateCallInvoker(), key);
}
