using System.Globalization;
using Microsoft.Extensions.Hosting;
using SummaryService.Container.Tests.Support;
using YamlDotNet.RepresentationModel;

namespace SummaryService.Container.Tests.Manifests;

/// <summary>The Kubernetes manifests, parsed, against the server and the image they run.</summary>
public sealed class KubernetesManifestTests
{
    [Fact]
    public void The_kustomization_applies_every_manifest_of_the_folder_and_each_is_a_known_kind()
    {
        var listed = Yaml.Items(KubernetesFiles.Kustomization, "resources").Select(item => ((YamlScalarNode)item).Value).Order(StringComparer.Ordinal);
        var present = Directory.EnumerateFiles(KubernetesFiles.Folder, "*.yaml").Select(Path.GetFileName).Where(name => name != "kustomization.yaml").Order(StringComparer.Ordinal);
        Assert.Equal(present, listed);

        var kinds = KubernetesFiles.Resources.SelectMany(file => file.Documents).Select(d => (Yaml.Text(d, "apiVersion"), Yaml.Text(d, "kind")));
        Assert.Equal([("apps/v1", "StatefulSet"), ("v1", "ConfigMap"), ("v1", "Service"), ("v1", "Service")], kinds.Order());
    }

    [Fact]
    public void Container_ports_service_ports_and_probes_are_the_ports_the_server_listens_on()
    {
        Uri grpc = KubernetesFiles.EndpointUrl("Grpc");
        Uri http = KubernetesFiles.EndpointUrl("Http");
        Assert.Equal((ServerDefaults.GrpcPort, ServerDefaults.HttpPort), (grpc.Port, http.Port));
        Assert.Equal(("0.0.0.0", "0.0.0.0"), (grpc.Host, http.Host)); // the kubelet and the Service reach the pod's address, not its loopback

        YamlNode server = KubernetesFiles.Server;
        Assert.Equal(grpc.Port, Yaml.Number(Yaml.Named(server, "grpc", "ports"), "containerPort"));
        Assert.Equal(http.Port, Yaml.Number(Yaml.Named(server, "http", "ports"), "containerPort"));

        // Every probe asks the standard gRPC health service on the gRPC endpoint.
        foreach (string probe in new[] { "startupProbe", "readinessProbe", "livenessProbe" })
        {
            Assert.Equal(grpc.Port, Yaml.Number(server, probe, "grpc", "port"));
            Assert.Null(Yaml.NodeOrNull(server, probe, "httpGet"));
        }

        // Both Services send each port to the container port of the same name, and select the pod.
        var podLabels = Yaml.Pairs(KubernetesFiles.StatefulSet, "spec", "template", "metadata", "labels");
        var services = KubernetesFiles.Resources.SelectMany(file => file.Documents).Where(d => Yaml.Text(d, "kind") == "Service").ToList();
        Assert.All(services, service =>
        {
            Assert.All(Yaml.Pairs(service, "spec", "selector"), label => Assert.Equal(label.Value, podLabels[label.Key]));
            foreach (YamlNode port in Yaml.Items(service, "spec", "ports"))
            {
                string name = Yaml.Text(port, "targetPort");
                Assert.Equal(Yaml.Number(Yaml.Named(server, name, "ports"), "containerPort"), Yaml.Number(port, "port"));
            }
        });

        // The StatefulSet's pods are named through a headless Service.
        string serviceName = Yaml.Text(KubernetesFiles.StatefulSet, "spec", "serviceName");
        Assert.Equal("None", Yaml.Text(services.Single(s => Yaml.Text(s, "metadata", "name") == serviceName), "spec", "clusterIP"));
    }

    [Fact]
    public void A_persistent_volume_claim_is_mounted_where_the_server_and_the_image_keep_their_data()
    {
        Assert.Equal(ImageLayout.DataDirectory, KubernetesFiles.ConfigMap["Persistence__DataDirectory"]);

        YamlNode claim = Yaml.Items(KubernetesFiles.StatefulSet, "spec", "volumeClaimTemplates").Single();
        string claimName = Yaml.Text(claim, "metadata", "name");
        Assert.Equal(ImageLayout.DataDirectory, Yaml.Text(Yaml.Named(KubernetesFiles.Server, claimName, "volumeMounts"), "mountPath"));
        Assert.Equal("ReadWriteOnce", Yaml.Text(claim, "spec", "accessModes", "0"));
        Assert.True(KubernetesQuantity.Parse(Yaml.Text(claim, "spec", "resources", "requests", "storage")) > 0);
        Assert.Equal(1, Yaml.Number(KubernetesFiles.StatefulSet, "spec", "replicas")); // one store per volume; replicas would not share data
    }

    [Fact]
    public void The_pod_runs_as_the_image_user_never_root_with_no_privileges_and_a_read_only_root_filesystem()
    {
        var (user, group) = ImageLayout.Account;
        YamlNode pod = Yaml.Node(KubernetesFiles.PodSpec, "securityContext");
        Assert.Equal("true", Yaml.Text(pod, "runAsNonRoot"));
        Assert.Equal((user, group, group), (Yaml.Number(pod, "runAsUser"), Yaml.Number(pod, "runAsGroup"), Yaml.Number(pod, "fsGroup")));
        Assert.Equal("RuntimeDefault", Yaml.Text(pod, "seccompProfile", "type"));

        YamlNode container = Yaml.Node(KubernetesFiles.Server, "securityContext");
        Assert.Equal("false", Yaml.Text(container, "allowPrivilegeEscalation"));
        Assert.Equal("true", Yaml.Text(container, "readOnlyRootFilesystem"));
        Assert.Equal("ALL", Yaml.Text(container, "capabilities", "drop", "0"));

        // With the root filesystem read-only, /tmp is a scratch volume.
        string tmp = Yaml.Text(Yaml.Items(KubernetesFiles.Server, "volumeMounts").Single(m => Yaml.Text(m, "mountPath") == "/tmp"), "name");
        Assert.NotNull(Yaml.NodeOrNull(Yaml.Named(KubernetesFiles.PodSpec, tmp, "volumes"), "emptyDir"));
    }

    [Fact]
    public void Requests_stay_within_limits_and_the_memory_limit_lies_above_the_store_memory_budget()
    {
        YamlNode resources = Yaml.Node(KubernetesFiles.Server, "resources");
        foreach (string resource in new[] { "cpu", "memory" })
        {
            double request = KubernetesQuantity.Parse(Yaml.Text(resources, "requests", resource));
            double limit = KubernetesQuantity.Parse(Yaml.Text(resources, "limits", resource));
            Assert.InRange(request, double.Epsilon, limit);
        }

        long budget = long.Parse(KubernetesFiles.ConfigMap.GetValueOrDefault("Store__MemoryBudgetBytes") ?? ServerDefaults.MemoryBudgetBytes.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
        Assert.True(KubernetesQuantity.Parse(Yaml.Text(resources, "limits", "memory")) > budget, "the store alone may use its whole budget");
    }

    [Fact]
    public void The_grace_period_outlasts_the_host_shutdown_so_the_final_snapshot_is_written()
    {
        // HostOptions is what the server's host uses; its default ShutdownTimeout bounds the graceful stop.
        TimeSpan shutdown = new HostOptions().ShutdownTimeout;
        Assert.True(Yaml.Number(KubernetesFiles.PodSpec, "terminationGracePeriodSeconds") > shutdown.TotalSeconds);
    }

    [Fact]
    public void Settings_come_from_the_config_map_and_api_keys_from_the_generated_secret()
    {
        var sources = Yaml.Items(KubernetesFiles.Server, "envFrom");
        Assert.Equal(Yaml.Text(KubernetesFiles.Resource("ConfigMap"), "metadata", "name"), Yaml.Text(sources.Single(s => Yaml.NodeOrNull(s, "configMapRef") is not null), "configMapRef", "name"));
        YamlNode generator = Yaml.Items(KubernetesFiles.Kustomization, "secretGenerator").Single();
        Assert.Equal(Yaml.Text(generator, "name"), Yaml.Text(sources.Single(s => Yaml.NodeOrNull(s, "secretRef") is not null), "secretRef", "name"));
        Assert.Equal("true", KubernetesFiles.ConfigMap["Auth__Enabled"]);

        // Keys are stored as hashes only; the operator's file stays out of the repository.
        Assert.Equal("api-keys.env", Yaml.Text(generator, "envs", "0"));
        Assert.Contains("deploy/kubernetes/api-keys.env", File.ReadAllLines(RepositoryFiles.PathOf(".gitignore")));
        Assert.All(KubernetesFiles.ExampleKeys.Where(p => p.Key.EndsWith("__Sha256", StringComparison.Ordinal)), p => Assert.Matches("^[0-9a-f]{64}$", p.Value));
        Assert.All(KubernetesFiles.ExampleKeys.Where(p => p.Key.Contains("__Scopes__", StringComparison.Ordinal)), p => Assert.Contains(p.Value, new[] { "write", "read", "admin" }));
    }
}
