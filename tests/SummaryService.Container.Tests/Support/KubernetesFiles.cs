using YamlDotNet.RepresentationModel;

namespace SummaryService.Container.Tests.Support;

/// <summary>The Kubernetes manifests of deploy/kubernetes and the pieces the tests look at.</summary>
internal static class KubernetesFiles
{
    public static string Folder => RepositoryFiles.PathOf("deploy", "kubernetes");

    public static YamlMappingNode Kustomization => YamlFile.Load(Path.Combine(Folder, "kustomization.yaml")).Documents.Single();

    /// <summary>Every resource the kustomization applies.</summary>
    public static IReadOnlyList<YamlFile> Resources =>
        [.. Yaml.Items(Kustomization, "resources").Select(item => YamlFile.Load(Path.Combine(Folder, ((YamlScalarNode)item).Value!)))];

    public static YamlMappingNode Resource(string kind) => Resources.SelectMany(file => file.Documents).Single(d => Yaml.Text(d, "kind") == kind);

    public static YamlMappingNode StatefulSet => Resource("StatefulSet");

    public static YamlNode PodSpec => Yaml.Node(StatefulSet, "spec", "template", "spec");

    public static YamlNode Server => Yaml.Named(PodSpec, "server", "containers");

    public static IReadOnlyDictionary<string, string> ConfigMap => Yaml.Pairs(Resource("ConfigMap"), "data");

    /// <summary>The example keys file the Secret is generated from (the real one is the operator's).</summary>
    public static IReadOnlyDictionary<string, string> ExampleKeys =>
        ClusterDeployFiles.EnvFile(Path.Combine(Folder, "api-keys.env.example"));

    /// <summary>The port of a Kestrel endpoint URL the ConfigMap sets.</summary>
    public static Uri EndpointUrl(string endpoint) => new(ConfigMap[$"Kestrel__Endpoints__{endpoint}__Url"]);
}
