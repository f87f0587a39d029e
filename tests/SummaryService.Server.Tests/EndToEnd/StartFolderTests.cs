using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>
/// The built server keeps its documented defaults wherever it is started from, as a service
/// manager or a container starts it: its settings file is read from its own folder, not from the
/// working directory, and a relative data directory lies under the working directory.
/// </summary>
[Collection(nameof(EndToEndTests))]
public sealed class StartFolderTests
{
    [Fact]
    public async Task Started_from_another_folder_the_server_reads_the_settings_file_of_its_own_folder()
    {
        using var elsewhere = new TempDirectory();

        // A settings file in the working directory that would break cleartext gRPC if it were read.
        await File.WriteAllTextAsync(Path.Combine(elsewhere.Path, "appsettings.json"), """{ "Kestrel": { "Endpoints": { "Grpc": { "Protocols": "Http1" } } } }""");

        // Only the port moves (the documented override); cleartext gRPC then works only with the
        // HTTP/2-only protocol setting that the app folder's appsettings.json gives the endpoint:
        // Kestrel's own default (HTTP/1.1 and HTTP/2) cannot serve it without TLS.
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string>(), workingDirectory: elsewhere.Path);
        using var channel = GrpcChannel.ForAddress(server.Address);
        PushReply reply = await new Ingest.IngestClient(channel).PushAsync(Requests.Batch("depot.start.latency", [12.5, 13.0]));

        Assert.Equal(2UL, reply.Accepted);
        Assert.Contains($"Content root path: {Path.GetDirectoryName(ServerProcess.ServerDll)}", server.Output, StringComparison.Ordinal);
        Assert.True(Directory.Exists(Path.Combine(elsewhere.Path, "data", "wal")), "the default ./data lies under the working directory");
    }
}
