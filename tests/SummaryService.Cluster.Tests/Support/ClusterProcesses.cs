namespace SummaryService.Cluster.Tests.Support;

/// <summary>
/// The tests that start server processes share one PostgreSQL and one Redis and run one after
/// another: three nodes at a time are what a two-core machine carries without starving their
/// liveness probes, which would make a busy node look dead.
/// </summary>
[CollectionDefinition(Name)]
public sealed class ClusterProcesses : ICollectionFixture<ClusterServices>
{
    public const string Name = "cluster processes";
}
