namespace SummaryService.Cluster.Hosting;

/// <summary>The <c>Cluster</c> section: whether the server runs alone or as one node of a cluster, and how the nodes meet.</summary>
public sealed class ClusterSettings
{
    /// <summary>Configuration section name.</summary>
    public const string SectionName = "Cluster";

    /// <summary><see cref="ClusterMode.Single"/> (default) or <see cref="ClusterMode.Orleans"/>.</summary>
    public ClusterMode Mode { get; set; } = ClusterMode.Single;

    /// <summary>Partition grains the series are spread over; fixed for the life of the data (changing it strands what was kept).</summary>
    public int Partitions { get; set; } = 64;

    /// <summary>How long a query waits for each partition before failing with the partitions that did not answer named.</summary>
    public TimeSpan PartitionTimeout { get; set; } = TimeSpan.FromSeconds(10);

    /// <summary>
    /// How long a node waits for another's answer to a liveness probe. Three missed probes in a row
    /// make it suspect the other node, and two suspecting nodes declare it dead, whereupon its
    /// partitions activate elsewhere: a killed node's partitions are back within a few of these
    /// (Orleans' own default, 5 s, leaves a partition unwritable for about half a minute).
    /// </summary>
    public TimeSpan ProbeTimeout { get; set; } = TimeSpan.FromSeconds(2);

    /// <summary>Npgsql connection string of the database holding the partitions' log and snapshots.</summary>
    public string Postgres { get; set; } = "";

    /// <summary>StackExchange.Redis configuration string of the membership store.</summary>
    public string Redis { get; set; } = "";

    /// <summary>Name of this deployment: nodes with the same one form one cluster.</summary>
    public string ClusterId { get; set; } = "summary-service";

    /// <summary>Address the other nodes reach this one at.</summary>
    public string AdvertisedAddress { get; set; } = "127.0.0.1";

    /// <summary>Port for traffic between nodes.</summary>
    public int SiloPort { get; set; } = 11111;

    /// <summary>Port for Orleans clients outside the nodes (none are needed: every node serves the API itself).</summary>
    public int GatewayPort { get; set; } = 30000;

    /// <summary>Why these settings cannot run, or null when they can.</summary>
    public string? Problem()
    {
        if (Mode != ClusterMode.Orleans)
        {
            return null;
        }

        if (Partitions is < 1 or > 65_536)
        {
            return $"Cluster:Partitions is {Partitions}; it must be between 1 and 65536.";
        }

        if (PartitionTimeout <= TimeSpan.Zero)
        {
            return $"Cluster:PartitionTimeout is {PartitionTimeout}; it must be positive.";
        }

        if (ProbeTimeout <= TimeSpan.Zero)
        {
            return $"Cluster:ProbeTimeout is {ProbeTimeout}; it must be positive.";
        }

        if (string.IsNullOrWhiteSpace(Postgres))
        {
            return "Cluster:Postgres is empty; Orleans mode keeps every partition in PostgreSQL and needs its connection string.";
        }

        if (string.IsNullOrWhiteSpace(Redis))
        {
            return "Cluster:Redis is empty; Orleans mode finds the other nodes through Redis and needs its configuration string.";
        }

        return null;
    }
}
