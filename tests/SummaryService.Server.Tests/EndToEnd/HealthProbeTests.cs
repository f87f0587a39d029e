using System.Globalization;
using SummaryService.Server.Hosting;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.EndToEnd;

/// <summary>
/// <c>--probe</c>: the server binary asks a running server's gRPC health service and answers with
/// its exit code, which is what a container health check reads.
/// </summary>
[Collection(nameof(EndToEndTests))]
public sealed class HealthProbeTests
{
    private static readonly TimeSpan Limit = TimeSpan.FromSeconds(30);

    [Fact]
    public async Task The_probe_exits_0_for_a_serving_server_found_through_its_configured_endpoint()
    {
        using var data = new TempDirectory();
        await using var server = await ServerProcess.StartAsync(new Dictionary<string, string> { ["Persistence__DataDirectory"] = data.Path });

        // Configured as a container configures it: listening on every address, probed over loopback.
        CommandResult result = await Probe([], new Dictionary<string, string> { ["Kestrel__Endpoints__Grpc__Url"] = $"http://0.0.0.0:{server.Address.Port}" });

        Assert.True(result.ExitCode == 0, result.Output);
        Assert.Contains($"Serving at http://127.0.0.1:{server.Address.Port}/", result.Output, StringComparison.Ordinal);
    }

    [Fact]
    public async Task The_probe_exits_1_when_nothing_answers_at_the_given_address()
    {
        string address = $"http://127.0.0.1:{ServerProcess.FreePort().ToString(CultureInfo.InvariantCulture)}";

        CommandResult result = await Probe([address], new Dictionary<string, string>());

        Assert.True(result.ExitCode == 1, result.Output);
        Assert.Contains("Unavailable", result.Output, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("http://0.0.0.0:5170", "http://127.0.0.1:5170")]
    [InlineData("http://[::]:5170", "http://127.0.0.1:5170")]
    [InlineData("http://+:5170", "http://127.0.0.1:5170")]
    [InlineData("http://*:5170", "http://127.0.0.1:5170")]
    [InlineData("http://127.0.0.1:6000", "http://127.0.0.1:6000")]
    public void A_wildcard_listening_address_is_probed_over_loopback(string listening, string probed) =>
        Assert.Equal(probed, HealthProbe.ToLoopback(listening));

    private static Task<CommandResult> Probe(string[] arguments, IReadOnlyDictionary<string, string> environment) =>
        ChildCommand.RunAsync("dotnet", [ServerProcess.ServerDll, HealthProbe.Switch, .. arguments], Path.GetTempPath(), Limit, environment);
}
