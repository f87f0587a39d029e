using System.Globalization;
using Microsoft.Extensions.Hosting;
using SummaryService.Container.Tests.Support;
using YamlDotNet.RepresentationModel;

namespace SummaryService.Container.Tests.Manifests;

/// <summary>The compose file for local use and its collector configuration, parsed, against the server and the image.</summary>
public sealed class ComposeFileTests
{
    private static readonly string Folder = RepositoryFiles.PathOf("deploy", "compose");

    private static YamlMappingNode Compose => YamlFile.Load(Path.Combine(Folder, "compose.yaml")).Documents.Single();

    private static YamlNode Server => Yaml.Node(Compose, "services", "summaryservice");

    private static YamlMappingNode Collector => YamlFile.Load(Path.Combine(Folder, "otel-collector.yaml")).Documents.Single();

    [Fact]
    public void The_server_is_built_from_the_repository_Dockerfile_and_publishes_its_ports_on_loopback_only()
    {
        Assert.Equal(RepositoryFiles.PathOf("Dockerfile"), Path.GetFullPath(Path.Combine(Folder, Yaml.Text(Server, "build", "context"), Yaml.Text(Server, "build", "dockerfile"))));

        var published = Yaml.Items(Server, "ports").Select(p => ((YamlScalarNode)p).Value!.Split(':')).ToList();
        Assert.All(published, p => Assert.Equal("127.0.0.1", p[0]));
        Assert.Equal([ServerDefaults.GrpcPort, ServerDefaults.HttpPort], published.Select(p => int.Parse(p[2], CultureInfo.InvariantCulture)));
    }

    [Fact]
    public void The_data_directory_of_the_image_is_a_named_volume_and_the_stop_grace_outlasts_the_host_shutdown()
    {
        string[] mount = ((YamlScalarNode)Yaml.Items(Server, "volumes").Single()).Value!.Split(':');
        Assert.Equal(ImageLayout.DataDirectory, mount[1]);
        Assert.NotNull(Yaml.NodeOrNull(Compose, "volumes", mount[0])); // named, so it outlives the container

        string grace = Yaml.Text(Server, "stop_grace_period");
        Assert.EndsWith("s", grace, StringComparison.Ordinal);
        Assert.True(int.Parse(grace[..^1], CultureInfo.InvariantCulture) > new HostOptions().ShutdownTimeout.TotalSeconds);
    }

    [Fact]
    public void The_server_exports_to_the_collector_OTLP_gRPC_receiver_and_every_pipeline_uses_defined_components()
    {
        var environment = Yaml.Pairs(Server, "environment");
        var endpoint = new Uri(environment["OTEL_EXPORTER_OTLP_ENDPOINT"]);
        Assert.Equal("grpc", environment["OTEL_EXPORTER_OTLP_PROTOCOL"]);
        Assert.NotNull(Yaml.NodeOrNull(Compose, "services", endpoint.Host));
        Assert.Contains(endpoint.Host, Yaml.Items(Server, "depends_on").Select(d => ((YamlScalarNode)d).Value));

        // The collector's configuration file is the one mounted where its command reads it.
        YamlNode collector = Yaml.Node(Compose, "services", endpoint.Host);
        string[] config = ((YamlScalarNode)Yaml.Items(collector, "volumes").Single()).Value!.Split(':');
        Assert.Equal("./otel-collector.yaml", config[0]);
        Assert.Equal($"--config={config[1]}", Yaml.Text(collector, "command", "0"));

        Assert.EndsWith($":{endpoint.Port}", Yaml.Text(Collector, "receivers", "otlp", "protocols", "grpc", "endpoint"), StringComparison.Ordinal);
        foreach (string signal in new[] { "traces", "metrics", "logs" })
        {
            YamlNode pipeline = Yaml.Node(Collector, "service", "pipelines", signal);
            foreach (string part in new[] { "receivers", "processors", "exporters" })
            {
                Assert.All(Yaml.Items(pipeline, part), name => Assert.NotNull(Yaml.NodeOrNull(Collector, part, ((YamlScalarNode)name).Value!)));
            }
        }
    }
}
