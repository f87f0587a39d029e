using Docker.DotNet;
using SummaryService.TestSupport;

namespace SummaryService.Container.Tests.Support;

/// <summary>
/// The server image, built once per test run by <c>deploy/container/build-offline.sh</c> (the path
/// that needs no registry), or an image built elsewhere (for example by <c>docker build</c> from the
/// Dockerfile) named in <see cref="ImageVariable"/>, so both paths pass the same tests.
/// </summary>
public sealed class ServerImage : IAsyncLifetime
{
    /// <summary>Names an existing image to test instead of building one.</summary>
    public const string ImageVariable = "SUMMARYSERVICE_IMAGE";

    private const string BuiltTag = "summaryservice:test";

    private static readonly TimeSpan BuildLimit = TimeSpan.FromMinutes(15);

    private DockerClient? _docker;

    /// <summary>The image's tag.</summary>
    public string Tag { get; private set; } = "";

    /// <summary>The engine's own client.</summary>
    public DockerClient Docker => _docker ?? throw new InvalidOperationException("No Docker engine.");

    public async Task InitializeAsync()
    {
        if (DockerEngine.WhyUnreachable is { } reason)
        {
            // Skipped tests need no image; required ones fail here with the reason.
            if (DockerEngine.Required)
            {
                throw new InvalidOperationException($"{DockerEngine.RequiredVariable} is set but there is no Docker engine: {reason}.");
            }

            return;
        }

        _docker = DockerEngine.CreateClient();
        string? given = Environment.GetEnvironmentVariable(ImageVariable);
        if (!string.IsNullOrWhiteSpace(given))
        {
            Tag = given;
            await Docker.Images.InspectImageAsync(Tag);
            return;
        }

        await ChildCommand.RunCheckedAsync(
            RepositoryFiles.PathOf("deploy", "container", "build-offline.sh"),
            [BuiltTag],
            RepositoryFiles.Root,
            BuildLimit,
            new Dictionary<string, string> { ["SUMMARYSERVICE_BUILD_DIR"] = Path.Combine(Path.GetTempPath(), "summaryservice-image-tests") });
        Tag = BuiltTag;
    }

    public Task DisposeAsync()
    {
        _docker?.Dispose();
        return Task.CompletedTask;
    }
}

/// <summary>The tests of the running image share one image and run one at a time.</summary>
[CollectionDefinition(nameof(ServerImage))]
public sealed class ServerImageCollection : ICollectionFixture<ServerImage>;
