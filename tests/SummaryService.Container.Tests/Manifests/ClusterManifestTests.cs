using System.Globalization;
using System.Net;
using Microsoft.Extensions.Hosting;
using Npgsql;
using SummaryService.Container.Tests.Support;
using YamlDotNet.RepresentationModel;

namespace SummaryService.Container.Tests.Manifests;

/// <summary>
/// The cluster-mode deployment files, parsed, against the settings the server reads: every
/// SummaryService setting they give must exist and the required ones must be there, so the files
/// cannot drift from the server unnoticed.
/// </summary>
public sealed class ClusterManifestTests
{
    [Fact]
    public void The_settings_checker_refuses_a_misspelt_key_a_key_of_no_section_and_a_missing_database()
    {
        // The checker itself, on the Kubernetes environment changed in three ways it must notice.
        var environment = ClusterDeployFiles.PodEnvironment();
        Assert.Empty(ServerSettingCheck.Problems(environment));

        var misspelt = new Dictionary<string, string>(environment) { ["Cluster__Partitons"] = "64" };
        Assert.Contains(ServerSettingCheck.Problems(misspelt), p => p.Contains("Partitons", StringComparison.Ordinal));

        var nowhere = new Dictionary<string, string>(environment) { ["Clustr__Mode"] = "Orleans" };
        Assert.Contains(ServerSettingCheck.Problems(nowhere), p => p.Contains("Clustr__Mode", StringComparison.Ordinal));

        var noDatabase = new Dictionary<string, string>(environment);
        noDatabase.Remove("Cluster__Postgres");
        Assert.Contains(ServerSettingCheck.Problems(noDatabase), p => p.Contains("Cluster:Postgres", StringComparison.Ordinal));
    }

    [Fact]
    public void Every_setting_the_Kubernetes_nodes_get_is_one_the_server_reads_and_Orleans_mode_has_what_it_needs()
    {
        var environment = ClusterDeployFiles.PodEnvironment();
        Assert.Empty(ServerSettingCheck.Problems(environment));
        Assert.Equal("Orleans", environment["Cluster__Mode"]);
    }

    [Fact]
    public void Every_setting_each_compose_node_gets_is_one_the_server_reads_and_Orleans_mode_has_what_it_needs()
    {
        Assert.Equal(3, ClusterDeployFiles.ComposeNodes.Count);
        Assert.All(ClusterDeployFiles.ComposeNodes, node =>
        {
            var environment = ClusterDeployFiles.ComposeEnvironment(node);
            Assert.Empty(ServerSettingCheck.Problems(environment));
            Assert.Equal("Orleans", environment["Cluster__Mode"]);
        });
    }

    [Fact]
    public void The_kustomization_applies_every_manifest_of_the_folder_and_each_is_a_known_kind()
    {
        var listed = Yaml.Items(ClusterDeployFiles.Kustomization, "resources").Select(item => ((YamlScalarNode)item).Value).Order(StringComparer.Ordinal);
        var present = Directory.EnumerateFiles(ClusterDeployFiles.KubernetesFolder, "*.yaml").Select(Path.GetFileName).Where(name => name != "kustomization.yaml").Order(StringComparer.Ordinal);
        Assert.Equal(present, listed);

        var kinds = ClusterDeployFiles.Resources.Select(d => (Yaml.Text(d, "apiVersion"), Yaml.Text(d, "kind")));
        Assert.Equal([("apps/v1", "Deployment"), ("policy/v1", "PodDisruptionBudget"), ("v1", "ConfigMap"), ("v1", "Service")], kinds.Order());
    }

    [Fact]
    public void The_database_settings_come_from_a_Secret_and_each_node_advertises_its_own_pod_address()
    {
        YamlNode server = ClusterDeployFiles.Server;
        foreach (string setting in new[] { "Cluster__Postgres", "Cluster__Redis" })
        {
            YamlNode variable = Yaml.Named(server, setting, "env");
            Assert.NotNull(Yaml.NodeOrNull(variable, "valueFrom", "secretKeyRef"));
            Assert.DoesNotContain(setting, Yaml.Pairs(ClusterDeployFiles.Resource("ConfigMap"), "data").Keys); // never in plain sight
        }

        Assert.Equal("status.podIP", Yaml.Text(Yaml.Named(server, "Cluster__AdvertisedAddress", "env"), "valueFrom", "fieldRef", "fieldPath"));
        Assert.NotNull(new NpgsqlConnectionStringBuilder(ClusterDeployFiles.PodEnvironment()["Cluster__Postgres"]).Host);
    }

    [Fact]
    public void Container_ports_are_the_ports_the_node_listens_on_and_every_probe_asks_the_health_service()
    {
        var environment = ClusterDeployFiles.PodEnvironment();
        YamlNode server = ClusterDeployFiles.Server;
        int grpc = new Uri(environment["Kestrel__Endpoints__Grpc__Url"]).Port;
        Assert.Equal(grpc, Yaml.Number(Yaml.Named(server, "grpc", "ports"), "containerPort"));
        Assert.Equal(new Uri(environment["Kestrel__Endpoints__Http__Url"]).Port, Yaml.Number(Yaml.Named(server, "http", "ports"), "containerPort"));
        Assert.Equal(Number(environment["Cluster__SiloPort"]), Yaml.Number(Yaml.Named(server, "silo", "ports"), "containerPort"));
        Assert.Equal(Number(environment["Cluster__GatewayPort"]), Yaml.Number(Yaml.Named(server, "gateway", "ports"), "containerPort"));

        foreach (string probe in new[] { "startupProbe", "readinessProbe", "livenessProbe" })
        {
            Assert.Equal(grpc, Yaml.Number(server, probe, "grpc", "port"));
        }

        // The client Service selects the nodes and sends each port to the container port of its name.
        YamlMappingNode service = ClusterDeployFiles.Resource("Service");
        Assert.All(Yaml.Pairs(service, "spec", "selector"), label => Assert.Equal(label.Value, ClusterDeployFiles.PodLabels[label.Key]));
        Assert.All(Yaml.Items(service, "spec", "ports"), port =>
            Assert.Equal(Yaml.Number(Yaml.Named(server, Yaml.Text(port, "targetPort"), "ports"), "containerPort"), Yaml.Number(port, "port")));
    }

    [Fact]
    public void Several_replicas_spread_over_machines_and_evictions_take_one_at_a_time()
    {
        int replicas = Yaml.Number(ClusterDeployFiles.Deployment, "spec", "replicas");
        Assert.True(replicas >= 3, $"{replicas} replicas");

        YamlNode term = Yaml.Node(ClusterDeployFiles.PodSpec, "affinity", "podAntiAffinity", "preferredDuringSchedulingIgnoredDuringExecution", "0", "podAffinityTerm");
        Assert.Equal("kubernetes.io/hostname", Yaml.Text(term, "topologyKey"));
        Assert.Equal(ClusterDeployFiles.PodLabels, Yaml.Pairs(term, "labelSelector", "matchLabels"));

        YamlMappingNode budget = ClusterDeployFiles.Resource("PodDisruptionBudget");
        Assert.Equal(ClusterDeployFiles.PodLabels, Yaml.Pairs(budget, "spec", "selector", "matchLabels"));
        Assert.Equal(1, Yaml.Number(budget, "spec", "maxUnavailable"));
        Assert.Equal(1, Yaml.Number(ClusterDeployFiles.Deployment, "spec", "strategy", "rollingUpdate", "maxUnavailable"));
    }

    [Fact]
    public void Nodes_are_given_time_to_hand_over_their_partitions_before_they_are_killed()
    {
        double shutdown = new HostOptions().ShutdownTimeout.TotalSeconds;
        Assert.True(Yaml.Number(ClusterDeployFiles.PodSpec, "terminationGracePeriodSeconds") > shutdown);
        Assert.All(ClusterDeployFiles.ComposeNodes, node =>
        {
            string grace = Yaml.Text(ClusterDeployFiles.Compose, "services", node, "stop_grace_period");
            Assert.True(int.Parse(grace.TrimEnd('s'), CultureInfo.InvariantCulture) > shutdown, $"{node}: {grace}");
        });
    }

    [Fact]
    public void Compose_nodes_advertise_their_own_network_address_and_reach_the_database_and_Redis_services_they_start_after()
    {
        YamlMappingNode compose = ClusterDeployFiles.Compose;
        var addresses = new HashSet<string>(StringComparer.Ordinal);
        var published = new HashSet<string>(StringComparer.Ordinal);
        foreach (string node in ClusterDeployFiles.ComposeNodes)
        {
            var environment = ClusterDeployFiles.ComposeEnvironment(node);
            string advertised = environment["Cluster__AdvertisedAddress"];
            Assert.True(IPAddress.TryParse(advertised, out _), advertised);
            Assert.Equal(advertised, Yaml.Text(compose, "services", node, "networks", "cluster", "ipv4_address"));
            Assert.True(addresses.Add(advertised), $"{node} shares {advertised}");

            // The connection string names the postgres service and the account it creates.
            var database = new NpgsqlConnectionStringBuilder(environment["Cluster__Postgres"]);
            var postgres = Yaml.Pairs(compose, "services", database.Host!, "environment");
            Assert.Equal((postgres["POSTGRES_DB"], postgres["POSTGRES_USER"], postgres["POSTGRES_PASSWORD"]), (database.Database, database.Username, database.Password));
            string redis = environment["Cluster__Redis"].Split(':')[0];
            Assert.NotNull(Yaml.NodeOrNull(compose, "services", redis));
            Assert.Equal("service_healthy", Yaml.Text(compose, "services", node, "depends_on", database.Host!, "condition"));
            Assert.Equal("service_healthy", Yaml.Text(compose, "services", node, "depends_on", redis, "condition"));

            // Each node's API on its own loopback ports.
            foreach (YamlNode port in Yaml.Items(compose, "services", node, "ports"))
            {
                string[] parts = ((YamlScalarNode)port).Value!.Split(':');
                Assert.Equal("127.0.0.1", parts[0]);
                Assert.True(published.Add(parts[1]), $"{node} publishes {parts[1]} twice");
            }
        }
    }

    private static int Number(string text) => int.Parse(text, CultureInfo.InvariantCulture);
}
