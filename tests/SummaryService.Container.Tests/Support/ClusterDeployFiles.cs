using YamlDotNet.RepresentationModel;

namespace SummaryService.Container.Tests.Support;

/// <summary>The cluster-mode deployment files (deploy/kubernetes-cluster, deploy/compose/cluster.yaml) and the environment each gives a node.</summary>
internal static class ClusterDeployFiles
{
    /// <summary>The value the kubelet puts in a variable taken from <c>status.podIP</c>, for the checks.</summary>
    public const string ExamplePodIp = "10.244.1.7";

    public static string KubernetesFolder => RepositoryFiles.PathOf("deploy", "kubernetes-cluster");

    public static string ComposeFolder => RepositoryFiles.PathOf("deploy", "compose");

    public static YamlMappingNode Kustomization => YamlFile.Load(Path.Combine(KubernetesFolder, "kustomization.yaml")).Documents.Single();

    public static IReadOnlyList<YamlMappingNode> Resources =>
        [.. Yaml.Items(Kustomization, "resources").SelectMany(item => YamlFile.Load(Path.Combine(KubernetesFolder, ((YamlScalarNode)item).Value!)).Documents)];

    public static YamlMappingNode Resource(string kind) => Resources.Single(d => Yaml.Text(d, "kind") == kind);

    public static YamlMappingNode Deployment => Resource("Deployment");

    public static YamlNode PodSpec => Yaml.Node(Deployment, "spec", "template", "spec");

    public static YamlNode Server => Yaml.Named(PodSpec, "server", "containers");

    public static IReadOnlyDictionary<string, string> PodLabels => Yaml.Pairs(Deployment, "spec", "template", "metadata", "labels");

    /// <summary>
    /// The node's environment as the kubelet builds it: the ConfigMap and Secrets of <c>envFrom</c>,
    /// then <c>env</c>, whose Secret keys are read from the example file the Secret is generated from.
    /// </summary>
    public static Dictionary<string, string> PodEnvironment()
    {
        var environment = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (YamlNode source in Yaml.Items(Server, "envFrom"))
        {
            if (Yaml.TextOrNull(source, "configMapRef", "name") is { } configMap)
            {
                YamlMappingNode map = Resources.Single(d => Yaml.Text(d, "kind") == "ConfigMap" && Yaml.Text(d, "metadata", "name") == configMap);
                Copy(Yaml.Pairs(map, "data"), environment);
            }
            else
            {
                Copy(SecretExample(Yaml.Text(source, "secretRef", "name")), environment);
            }
        }

        foreach (YamlNode variable in Yaml.Items(Server, "env"))
        {
            string name = Yaml.Text(variable, "name");
            environment[name] = Yaml.TextOrNull(variable, "value")
                ?? (Yaml.TextOrNull(variable, "valueFrom", "fieldRef", "fieldPath") == "status.podIP" ? ExamplePodIp : null)
                ?? SecretExample(Yaml.Text(variable, "valueFrom", "secretKeyRef", "name"))[Yaml.Text(variable, "valueFrom", "secretKeyRef", "key")];
        }

        return environment;
    }

    /// <summary>
    /// The example of the env file a generated Secret is made from: its example beside the
    /// kustomization, or for the API keys the single-node deployment's, which the operator copies.
    /// </summary>
    public static IReadOnlyDictionary<string, string> SecretExample(string secret)
    {
        YamlNode generator = Yaml.Named(Kustomization, secret, "secretGenerator");
        string file = Yaml.Text(generator, "envs", "0");
        string example = Path.Combine(KubernetesFolder, file + ".example");
        return File.Exists(example) ? EnvFile(example) : file == "api-keys.env" ? KubernetesFiles.ExampleKeys : throw new FileNotFoundException($"no example for {file}", example);
    }

    public static YamlMappingNode Compose => YamlFile.Load(Path.Combine(ComposeFolder, "cluster.yaml")).Documents.Single();

    /// <summary>The compose services that run the server image.</summary>
    public static IReadOnlyList<string> ComposeNodes =>
        [.. ((YamlMappingNode)Yaml.Node(Compose, "services")).Children
            .Where(s => Yaml.TextOrNull(s.Value, "image") == Yaml.Text(Compose, "services", "node-1", "image"))
            .Select(s => ((YamlScalarNode)s.Key).Value!)];

    /// <summary>A compose node's environment: its env_file, then its own environment.</summary>
    public static Dictionary<string, string> ComposeEnvironment(string node)
    {
        YamlNode service = Yaml.Node(Compose, "services", node);
        var environment = new Dictionary<string, string>(StringComparer.Ordinal);
        Copy(EnvFile(Path.Combine(ComposeFolder, Yaml.Text(service, "env_file"))), environment);
        Copy(Yaml.Pairs(service, "environment"), environment);
        return environment;
    }

    /// <summary>KEY=VALUE lines; blank lines and # comments skipped.</summary>
    public static Dictionary<string, string> EnvFile(string path) =>
        File.ReadAllLines(path)
            .Where(line => line.Length > 0 && !line.StartsWith('#'))
            .Select(line => line.Split('=', 2))
            .ToDictionary(pair => pair[0], pair => pair[1], StringComparer.Ordinal);

    private static void Copy(IReadOnlyDictionary<string, string> from, Dictionary<string, string> to)
    {
        foreach (var (key, value) in from)
        {
            to[key] = value;
        }
    }
}
