namespace SummaryService.Client.Tests.Support;

/// <summary>Every test here starts a real server process; one at a time spares the two shared cores.</summary>
[CollectionDefinition(nameof(ServerCollection), DisableParallelization = true)]
public sealed class ServerCollection;
