using System.CommandLine;
using SummaryService.Cli.Connection;

namespace SummaryService.Cli.Commands;

/// <summary>
/// Options every command shares (server, key) and the ones every query command shares
/// (selection, window, output form), declared once so their names and help read the same everywhere.
/// </summary>
public sealed class CommonOptions
{
    /// <summary>Environment variable for the server address.</summary>
    public const string ServerVariable = "SUMMARY_SERVER";

    /// <summary>Environment variable for the API key.</summary>
    public const string ApiKeyVariable = "SUMMARY_API_KEY";

    /// <summary>The embedded default of the server's gRPC endpoint.</summary>
    public const string DefaultServer = "http://127.0.0.1:5170";

    /// <summary>Creates the options; <paramref name="environment"/> supplies the defaults from environment variables.</summary>
    public CommonOptions(Func<string, string?> environment)
    {
        ArgumentNullException.ThrowIfNull(environment);
        Server = new Option<string>("--server", "-s")
        {
            Description = $"gRPC address of the server (env {ServerVariable}).",
            HelpName = "url",
            Recursive = true,
            DefaultValueFactory = _ => NonEmpty(environment(ServerVariable)) ?? DefaultServer,
        };
        // No short form: -k means something else in common tools (curl's "insecure" among them).
        ApiKey = new Option<string?>("--api-key")
        {
            Description = $"API key sent as 'authorization: Bearer' (env {ApiKeyVariable}).",
            HelpName = "key",
            Recursive = true,
            DefaultValueFactory = _ => NonEmpty(environment(ApiKeyVariable)),
        };
    }

    /// <summary>--server.</summary>
    public Option<string> Server { get; }

    /// <summary>--api-key.</summary>
    public Option<string?> ApiKey { get; }

    /// <summary>A fresh --json flag (each command owns its option instance).</summary>
    public static Option<bool> Json() => new("--json")
    {
        Description = "Print the server's reply as one JSON document (protobuf JSON mapping) instead of tables.",
    };

    /// <summary>A fresh repeatable --label name=value matcher.</summary>
    public static Option<string[]> Labels(string name = "--label", string description = "Only series with this label value; repeat for more (name=value).") => new(name, name == "--label" ? ["-l"] : [])
    {
        Description = description,
        HelpName = "name=value",
        AllowMultipleArgumentsPerToken = false,
    };

    /// <summary>A fresh repeatable --group-by.</summary>
    public static Option<string[]> GroupBy() => new("--group-by", "-g")
    {
        Description = "One summary per value of this label; repeat for more labels.",
        HelpName = "label",
    };

    /// <summary>A fresh repeatable --quantile (no short form: -q means "quiet" in common tools).</summary>
    public static Option<double[]> Quantiles(string description) => new("--quantile")
    {
        Description = description,
        HelpName = "q",
    };

    /// <summary>A fresh --confidence.</summary>
    public static Option<double> Confidence() => new("--confidence")
    {
        Description = "Confidence of every interval, between 0 and 1.",
        DefaultValueFactory = _ => 0.99,
    };

    /// <summary>The metric argument.</summary>
    public static Argument<string> Metric() => new("metric")
    {
        Description = "Metric name, e.g. otterbyte.checkout.latency_ms.",
    };

    /// <summary>
    /// How the server's field names read as this tool's options, for every query command: the
    /// selection, the window and the figures asked for. Commands add their own (see <see cref="FieldNames"/>).
    /// </summary>
    public static FieldNames QueryFields { get; } = new(
        ("selector.metric", "the metric"),
        ("window.last", "--last"),
        ("window.range", "--from/--to"),
        ("window", "the window (--last, or --from and --to)"),
        ("quantiles", "--quantile #{n}"),
        ("confidence", "--confidence"),
        ("group_by", "--group-by"));

    private static string? NonEmpty(string? value) => string.IsNullOrWhiteSpace(value) ? null : value;
}
