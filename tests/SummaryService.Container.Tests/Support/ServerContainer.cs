using System.Formats.Tar;
using System.Globalization;
using Docker.DotNet.Models;
using DotNet.Testcontainers.Builders;
using DotNet.Testcontainers.Containers;
using DotNet.Testcontainers.Volumes;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.TestSupport;

namespace SummaryService.Container.Tests.Support;

/// <summary>
/// One container of the server image, started under Testcontainers the way the deployment runs it:
/// its data directory on a volume, a read-only root filesystem with a scratch /tmp, no capabilities,
/// no privilege gain. It shares the host's network and listens on free loopback ports given through
/// the documented environment variables, so the tests reach it over 127.0.0.1 only.
/// </summary>
internal sealed class ServerContainer : IAsyncDisposable
{
    private const int HealthPolls = 300;

    private readonly ServerImage _image;
    private readonly IContainer _container;

    private ServerContainer(ServerImage image, IContainer container, int grpcPort, int httpPort)
    {
        _image = image;
        _container = container;
        GrpcAddress = new Uri($"http://127.0.0.1:{grpcPort}");
        HttpAddress = new Uri($"http://127.0.0.1:{httpPort}");
        Channel = GrpcChannel.ForAddress(GrpcAddress);
    }

    public Uri GrpcAddress { get; }

    /// <summary>The HTTP/1.1 endpoint: the page and the JSON routes.</summary>
    public Uri HttpAddress { get; }

    public GrpcChannel Channel { get; }

    public Ingest.IngestClient Ingest => new(Channel);

    public Query.QueryClient Query => new(Channel);

    public string Id => _container.Id;

    /// <summary>Starts a container on <paramref name="volume"/> and returns once its gRPC health service says Serving.</summary>
    /// <param name="image">The image under test.</param>
    /// <param name="volume">Mounted at the image's data directory.</param>
    /// <param name="settings">Further server settings as environment variables.</param>
    public static async Task<ServerContainer> StartAsync(ServerImage image, IVolume volume, IReadOnlyDictionary<string, string>? settings = null)
    {
        ImageSettings layout = await ImageSettings.ReadAsync(image);
        int grpcPort = ServerProcess.FreePort();
        int httpPort = ServerProcess.FreePort();
        IContainer container = new ContainerBuilder(image.Tag)
            .WithVolumeMount(volume, layout.DataDirectory)
            .WithEnvironment("Kestrel__Endpoints__Grpc__Url", $"http://127.0.0.1:{grpcPort.ToString(CultureInfo.InvariantCulture)}")
            .WithEnvironment("Kestrel__Endpoints__Http__Url", $"http://127.0.0.1:{httpPort.ToString(CultureInfo.InvariantCulture)}")
            .WithEnvironment(settings ?? new Dictionary<string, string>())
            .WithCreateParameterModifier(parameters =>
            {
                parameters.HostConfig ??= new HostConfig();
                parameters.HostConfig.NetworkMode = "host";
                parameters.HostConfig.ReadonlyRootfs = true;
                parameters.HostConfig.Tmpfs = new Dictionary<string, string> { ["/tmp"] = "rw,noexec,nosuid" };
                parameters.HostConfig.CapDrop = ["ALL"];
                parameters.HostConfig.SecurityOpt = ["no-new-privileges"];
            })
            .Build();
        await container.StartAsync();
        var server = new ServerContainer(image, container, grpcPort, httpPort);
        try
        {
            await ChildProcessControl.WaitServingAsync(server.EndedAsync, () => GrpcChannel.ForAddress(server.GrpcAddress), server.LogsAsync, HealthPolls);
        }
        catch
        {
            await server.DisposeAsync();
            throw;
        }

        return server;
    }

    /// <summary>A new named volume, removed when disposed.</summary>
    public static async Task<IVolume> CreateVolumeAsync()
    {
        IVolume volume = new VolumeBuilder().WithName($"summaryservice-test-{Guid.NewGuid():N}").Build();
        await volume.CreateAsync();
        return volume;
    }

    /// <summary>What the server printed so far.</summary>
    public async Task<string> LogsAsync()
    {
        var (stdout, stderr) = await _container.GetLogsAsync(timestampsEnabled: false);
        return stdout + stderr;
    }

    /// <summary>The engine's view of the container.</summary>
    public Task<ContainerInspectResponse> InspectAsync() => _image.Docker.Containers.InspectContainerAsync(Id);

    /// <summary>The owner (numeric user id) of every file and folder under <paramref name="path"/> in the container, by path.</summary>
    public async Task<IReadOnlyDictionary<string, int>> OwnersAsync(string path)
    {
        var response = await _image.Docker.Containers.GetArchiveFromContainerAsync(Id, new ContainerPathStatParameters { Path = path }, statOnly: false);
        await using Stream archive = response.Stream ?? throw new InvalidOperationException($"No archive of {path}.");
        using var reader = new TarReader(archive);
        var owners = new Dictionary<string, int>(StringComparer.Ordinal);
        while (await reader.GetNextEntryAsync() is { } entry)
        {
            owners[entry.Name] = entry.Uid;
        }

        return owners;
    }

    /// <summary>Docker's stop (SIGTERM, the image's stop signal); returns the exit code.</summary>
    public async Task<long> StopAsync()
    {
        await _container.StopAsync();
        return await _container.GetExitCodeAsync();
    }

    /// <summary>SIGKILL: no graceful stop, no final snapshot.</summary>
    public async Task KillAsync()
    {
        await _image.Docker.Containers.KillContainerAsync(Id, new ContainerKillParameters { Signal = "SIGKILL" });
        await _image.Docker.Containers.WaitContainerAsync(Id);
    }

    public async ValueTask DisposeAsync()
    {
        Channel.Dispose();
        await _container.DisposeAsync();
    }

    private async Task<string?> EndedAsync()
    {
        ContainerInspectResponse state = await InspectAsync();
        return state.State is { Running: true } ? null : $"The container exited with {state.State?.ExitCode}";
    }
}
