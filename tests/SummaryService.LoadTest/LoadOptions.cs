using System.Globalization;

namespace SummaryService.LoadTest;

/// <summary>The load generator's command line; every option has a default so a bare run works.</summary>
public sealed record LoadOptions
{
    /// <summary>Series written and queried (<c>--series</c>).</summary>
    public int Series { get; init; } = 100;

    /// <summary>Values per batch (<c>--batch</c>).</summary>
    public int BatchSize { get; init; } = 4096;

    /// <summary>Back-fill values per 10 s bucket and series (<c>--per-bucket</c>).</summary>
    public int PerBucket { get; init; } = 2778;

    /// <summary>Back-filled 10 s buckets per series, ending now (<c>--buckets</c>; 360 = 1 h, at most 2100 to stay inside the 6 h tier).</summary>
    public int Buckets { get; init; } = 360;

    /// <summary>Producer streams (<c>--producers</c>).</summary>
    public int Producers { get; init; } = 4;

    /// <summary>Batches each producer sends ahead of their replies (<c>--inflight</c>).</summary>
    public int Inflight { get; init; } = 4;

    /// <summary>Query clients during the live phase (<c>--queriers</c>).</summary>
    public int Queriers { get; init; } = 2;

    /// <summary>Pause of each query client between queries (<c>--query-pause-ms</c>).</summary>
    public int QueryPauseMs { get; init; } = 50;

    /// <summary>Length of the live phase (<c>--seconds</c>).</summary>
    public int Seconds { get; init; } = 30;

    /// <summary>
    /// Server processes started as one cluster, with producers and query clients spread over them
    /// in turn (<c>--nodes</c>; above 1 needs <c>--server-env Cluster__Mode=Orleans</c> and the
    /// cluster's database settings, see Cluster/local-backing.sh).
    /// </summary>
    public int Nodes { get; init; } = 1;

    /// <summary>The real server's Persistence:Durability (<c>--durability</c>: wal, snapshot, none).</summary>
    public string Durability { get; init; } = "wal";

    /// <summary>Also run the exact baseline (<c>--no-baseline</c> turns it off).</summary>
    public bool Baseline { get; init; } = true;

    /// <summary>Where to write the JSON report (<c>--json-out</c>).</summary>
    public string? JsonOut { get; init; }

    /// <summary>Seed of every value and every query choice (<c>--seed</c>).</summary>
    public ulong Seed { get; init; } = 1;

    /// <summary>Single series whose last hour is checked for rank error (<c>--check-series</c>).</summary>
    public int CheckSeries { get; init; } = 3;

    /// <summary>Repeats of the all-series window query (<c>--window-repeats</c>; 0 skips it, e.g. at 10,000 series, where the store holds a copy of every bucket of every series for it).</summary>
    public int WindowRepeats { get; init; } = 3;

    /// <summary>Upper bound on the whole run (<c>--timeout-minutes</c>).</summary>
    public int TimeoutMinutes { get; init; } = 30;

    /// <summary>The real server's build to start (<c>--server-dll</c>); the Release build beside this program when absent.</summary>
    public string? ServerDll { get; init; }

    /// <summary>Extra environment for the real server, <c>--server-env Name=Value</c> (repeatable).</summary>
    public IReadOnlyDictionary<string, string> ServerEnvironment { get; init; } = new Dictionary<string, string>();

    /// <summary>Parses <c>--name value</c> pairs; an unknown or malformed option is an error naming it.</summary>
    public static LoadOptions Parse(IReadOnlyList<string> args)
    {
        var options = new LoadOptions();
        var environment = new Dictionary<string, string>(StringComparer.Ordinal);
        for (int i = 0; i < args.Count; i++)
        {
            string name = args[i];
            if (name == "--no-baseline")
            {
                options = options with { Baseline = false };
                continue;
            }

            if (i + 1 >= args.Count)
            {
                throw new ArgumentException($"{name} needs a value.");
            }

            string value = args[++i];
            options = name switch
            {
                "--series" => options with { Series = Positive(name, value) },
                "--batch" => options with { BatchSize = Positive(name, value) },
                "--per-bucket" => options with { PerBucket = Positive(name, value) },
                "--buckets" => options with { Buckets = Positive(name, value) },
                "--producers" => options with { Producers = Positive(name, value) },
                "--inflight" => options with { Inflight = Positive(name, value) },
                "--queriers" => options with { Queriers = NonNegative(name, value) },
                "--query-pause-ms" => options with { QueryPauseMs = NonNegative(name, value) },
                "--seconds" => options with { Seconds = Positive(name, value) },
                "--nodes" => options with { Nodes = Positive(name, value) },
                "--durability" => options with { Durability = value },
                "--json-out" => options with { JsonOut = value },
                "--seed" => options with { Seed = ulong.Parse(value, CultureInfo.InvariantCulture) },
                "--check-series" => options with { CheckSeries = NonNegative(name, value) },
                "--window-repeats" => options with { WindowRepeats = NonNegative(name, value) },
                "--timeout-minutes" => options with { TimeoutMinutes = Positive(name, value) },
                "--server-env" => AddEnvironment(options, environment, value),
                "--server-dll" => options with { ServerDll = Path.GetFullPath(value) },
                _ => throw new ArgumentException($"unknown option {name}."),
            };
        }

        if (options.Nodes > 1 && !(options.ServerEnvironment.TryGetValue("Cluster__Mode", out string? mode) && mode == "Orleans"))
        {
            throw new ArgumentException($"--nodes {options.Nodes} starts a cluster; give --server-env Cluster__Mode=Orleans with Cluster__Postgres and Cluster__Redis.");
        }

        if (options.Buckets > 2100)
        {
            throw new ArgumentException($"--buckets {options.Buckets} reaches past the 6 h of the 10 s tier; use at most 2100.");
        }

        return options;
    }

    /// <summary>The options as one command line, for the report.</summary>
    public string CommandLine() =>
        string.Create(CultureInfo.InvariantCulture, $"--series {Series} --batch {BatchSize} --per-bucket {PerBucket} --buckets {Buckets} --producers {Producers} --inflight {Inflight} --queriers {Queriers} --query-pause-ms {QueryPauseMs} --seconds {Seconds} --nodes {Nodes} --durability {Durability} --seed {Seed}")
        + (Baseline ? "" : " --no-baseline")
        + string.Concat(ServerEnvironment.Select(e => $" --server-env {e.Key}={e.Value}"))
        + (ServerDll is null ? "" : $" --server-dll {ServerDll}");

    private static LoadOptions AddEnvironment(LoadOptions options, Dictionary<string, string> environment, string value)
    {
        int equals = value.IndexOf('=', StringComparison.Ordinal);
        if (equals < 1)
        {
            throw new ArgumentException($"--server-env '{value}' must be Name=Value.");
        }

        environment[value[..equals]] = value[(equals + 1)..];
        return options with { ServerEnvironment = environment };
    }

    private static int Positive(string name, string value)
    {
        int parsed = NonNegative(name, value);
        return parsed > 0 ? parsed : throw new ArgumentException($"{name} is {value}; it must be at least 1.");
    }

    private static int NonNegative(string name, string value) =>
        int.TryParse(value, NumberStyles.None, CultureInfo.InvariantCulture, out int parsed) ? parsed : throw new ArgumentException($"{name} is '{value}'; it must be a whole number.");
}
