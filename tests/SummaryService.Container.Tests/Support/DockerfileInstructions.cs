using System.Globalization;

namespace SummaryService.Container.Tests.Support;

/// <summary>One instruction of a Dockerfile: its keyword, its arguments and the build stage it belongs to.</summary>
internal sealed record DockerfileInstruction(string Stage, string Keyword, string Arguments);

/// <summary>
/// The instructions of the repository's Dockerfile, with continuation lines joined and comments
/// dropped (the Dockerfile reference's line rules), each tagged with its stage name.
/// </summary>
internal static class DockerfileInstructions
{
    public static IReadOnlyList<DockerfileInstruction> Read()
    {
        var instructions = new List<DockerfileInstruction>();
        string stage = "";
        string pending = "";
        foreach (string raw in File.ReadAllLines(RepositoryFiles.PathOf("Dockerfile")))
        {
            string line = raw.Trim();
            if (line.StartsWith('#') || line.Length == 0)
            {
                continue;
            }

            if (line.EndsWith('\\'))
            {
                pending += line[..^1] + " ";
                continue;
            }

            string whole = pending + line;
            pending = "";
            string[] parts = whole.Split(' ', 2, StringSplitOptions.TrimEntries);
            string keyword = parts[0].ToUpperInvariant();
            string arguments = parts.Length > 1 ? parts[1] : "";
            if (keyword == "FROM")
            {
                string[] from = arguments.Split(' ', StringSplitOptions.RemoveEmptyEntries);
                stage = from.Length == 3 && from[1].Equals("AS", StringComparison.OrdinalIgnoreCase) ? from[2] : "";
            }

            instructions.Add(new DockerfileInstruction(stage, keyword, arguments));
        }

        return instructions;
    }

    /// <summary>The arguments of every instruction of one kind in one stage.</summary>
    public static IReadOnlyList<string> Of(string stage, string keyword) =>
        [.. Read().Where(i => i.Stage == stage && i.Keyword == keyword).Select(i => i.Arguments)];

    /// <summary>The variables a stage's ENV instructions set (key=value pairs separated by spaces).</summary>
    public static IReadOnlyDictionary<string, string> Environment(string stage) =>
        Of(stage, "ENV")
            .SelectMany(arguments => arguments.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            .Select(pair => pair.Split('=', 2))
            .ToDictionary(pair => pair[0], pair => pair[1], StringComparer.Ordinal);
}

/// <summary>What the running image is, from the Dockerfile's runtime-base stage: the facts every deployment file must match.</summary>
internal static class ImageLayout
{
    public const string Stage = "runtime-base";

    /// <summary>The numeric user and group of <c>USER uid:gid</c>.</summary>
    public static (int User, int Group) Account
    {
        get
        {
            string[] ids = DockerfileInstructions.Of(Stage, "USER").Single().Split(':');
            return (int.Parse(ids[0], CultureInfo.InvariantCulture), int.Parse(ids[1], CultureInfo.InvariantCulture));
        }
    }

    /// <summary>Persistence__DataDirectory as the image sets it.</summary>
    public static string DataDirectory => DockerfileInstructions.Environment(Stage)["Persistence__DataDirectory"];
}
