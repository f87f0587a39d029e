using YamlDotNet.RepresentationModel;

namespace SummaryService.Container.Tests.Support;

/// <summary>
/// The documents of a YAML file, read with a real YAML parser, and short paths into them whose
/// failures name the file and the path that is missing.
/// </summary>
internal sealed class YamlFile
{
    private YamlFile(string path, IReadOnlyList<YamlMappingNode> documents)
    {
        Path = path;
        Documents = documents;
    }

    public string Path { get; }

    public IReadOnlyList<YamlMappingNode> Documents { get; }

    public static YamlFile Load(string path)
    {
        using var reader = new StreamReader(path);
        var stream = new YamlStream();
        stream.Load(reader);
        return new YamlFile(path, [.. stream.Documents.Select(d => d.RootNode as YamlMappingNode ?? throw new InvalidDataException($"{path}: a document is not a mapping"))]);
    }

    /// <summary>The only document of the given kind (Kubernetes manifests).</summary>
    public YamlMappingNode Kind(string kind) => Documents.Single(d => Yaml.TextOrNull(d, "kind") == kind);
}

/// <summary>Paths into a YAML node: <c>Yaml.Text(node, "spec", "template", "metadata", "name")</c>; a number indexes a sequence.</summary>
internal static class Yaml
{
    public static YamlNode Node(YamlNode node, params string[] path) =>
        NodeOrNull(node, path) ?? throw new KeyNotFoundException($"no {string.Join('.', path)} at line {node.Start.Line}");

    public static YamlNode? NodeOrNull(YamlNode node, params string[] path)
    {
        YamlNode? current = node;
        foreach (string step in path)
        {
            current = current switch
            {
                YamlMappingNode map => map.Children.TryGetValue(new YamlScalarNode(step), out YamlNode? child) ? child : null,
                YamlSequenceNode list when int.TryParse(step, out int index) && index < list.Children.Count => list.Children[index],
                _ => null,
            };
        }

        return current;
    }

    public static string Text(YamlNode node, params string[] path) =>
        (Node(node, path) as YamlScalarNode)?.Value ?? throw new InvalidDataException($"{string.Join('.', path)} is not a plain value");

    public static string? TextOrNull(YamlNode node, params string[] path) => (NodeOrNull(node, path) as YamlScalarNode)?.Value;

    public static int Number(YamlNode node, params string[] path) => int.Parse(Text(node, path), System.Globalization.CultureInfo.InvariantCulture);

    public static IReadOnlyList<YamlNode> Items(YamlNode node, params string[] path) =>
        NodeOrNull(node, path) is YamlSequenceNode list ? [.. list.Children] : [];

    /// <summary>The item of a sequence whose <c>name</c> is <paramref name="name"/>.</summary>
    public static YamlNode Named(YamlNode node, string name, params string[] path) =>
        Items(node, path).SingleOrDefault(item => TextOrNull(item, "name") == name)
        ?? throw new KeyNotFoundException($"no item named '{name}' in {string.Join('.', path)}");

    /// <summary>The keys and plain values of a mapping.</summary>
    public static IReadOnlyDictionary<string, string> Pairs(YamlNode node, params string[] path) =>
        NodeOrNull(node, path) is YamlMappingNode map
            ? map.Children.ToDictionary(p => ((YamlScalarNode)p.Key).Value!, p => (p.Value as YamlScalarNode)?.Value ?? "", StringComparer.Ordinal)
            : new Dictionary<string, string>();
}
