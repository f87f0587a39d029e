namespace SummaryService.Cluster.Hosting;

/// <summary>How the server holds its series.</summary>
public enum ClusterMode
{
    /// <summary>One process with its embedded store and data directory; nothing else to run.</summary>
    Single,

    /// <summary>Every server is an Orleans silo; partition grains hold the series and keep them in PostgreSQL.</summary>
    Orleans,
}
