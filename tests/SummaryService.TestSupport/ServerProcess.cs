using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text;
using Grpc.Net.Client;

namespace SummaryService.TestSupport;

/// <summary>
/// The real server as a child process on a free loopback port, configured through environment
/// variables like an operator would. Stopped gracefully (SIGTERM) so the final snapshot runs.
/// </summary>
public sealed class ServerProcess : IAsyncDisposable
{
    private readonly Process _process;
    private readonly StringBuilder _output = new();

    private ServerProcess(Process process, Uri address, Uri httpAddress)
    {
        _process = process;
        Address = address;
        HttpAddress = httpAddress;
        process.OutputDataReceived += (_, e) => Append(e.Data);
        process.ErrorDataReceived += (_, e) => Append(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
    }

    public Uri Address { get; }

    /// <summary>The HTTP/1.1 endpoint: JSON routes and the page.</summary>
    public Uri HttpAddress { get; }

    public string Output
    {
        get
        {
            lock (_output)
            {
                return _output.ToString();
            }
        }
    }

    public bool HasExited => _process.HasExited;

    public int ExitCode => _process.ExitCode;

    /// <summary>The server's build output, next to this test assembly's in the same configuration.</summary>
    public static string ServerDll
    {
        get
        {
            string testDir = AppContext.BaseDirectory;
            string configuration = new DirectoryInfo(testDir).Parent!.Name;
            string root = Path.GetFullPath(Path.Combine(testDir, "..", "..", "..", "..", ".."));
            return Path.Combine(root, "src", "SummaryService.Server", "bin", configuration, "net10.0", "SummaryService.Server.dll");
        }
    }

    /// <summary>A loopback port for a server to bind; see <see cref="LoopbackPorts"/> for why not port 0.</summary>
    public static int FreePort() => LoopbackPorts.Take();

    /// <summary>
    /// Starts the server; with <paramref name="waitForHealth"/> returns once its health service
    /// answers. The process starts in <paramref name="workingDirectory"/>, or else the server's own folder.
    /// </summary>
    public static async Task<ServerProcess> StartAsync(IReadOnlyDictionary<string, string> environment, string scheme = "http", bool waitForHealth = true, Func<GrpcChannel>? channel = null, int? port = null, string? workingDirectory = null)
    {
        // A port drawn here can still be bound by someone else before the child binds it; then the
        // child exits at start-up, and a second draw is the whole remedy. Ports the caller chose are
        // part of what it tests (a restart on the same address), so those failures surface as they are.
        const int Launches = 3;
        for (int launch = 1; ; launch++)
        {
            ServerProcess server = Launch(environment, scheme, port ?? FreePort(), workingDirectory);
            if (!waitForHealth)
            {
                return server;
            }

            try
            {
                await server.WaitHealthyAsync(channel ?? (() => GrpcChannel.ForAddress(server.Address)));
                return server;
            }
            catch (InvalidOperationException) when (launch < Launches && port is null && channel is null && server.HasExited && server.Output.Contains("address already in use", StringComparison.OrdinalIgnoreCase))
            {
                await server.DisposeAsync();
            }
        }
    }

    private static ServerProcess Launch(IReadOnlyDictionary<string, string> environment, string scheme, int chosen, string? workingDirectory)
    {
        var address = new Uri($"{scheme}://127.0.0.1:{chosen}");
        var info = new ProcessStartInfo("dotnet")
        {
            WorkingDirectory = workingDirectory ?? Path.GetDirectoryName(ServerDll)!,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        info.ArgumentList.Add(ServerDll);

        // Both configured endpoints move to free ports; with TLS the test's own Secure endpoint is
        // the one under test and the cleartext gRPC endpoint just must not collide with anything.
        int grpcPort = scheme == "http" ? chosen : FreePort();
        var httpAddress = new Uri($"http://127.0.0.1:{FreePort()}");
        info.Environment["Kestrel__Endpoints__Grpc__Url"] = $"http://127.0.0.1:{grpcPort}";
        info.Environment["Kestrel__Endpoints__Http__Url"] = httpAddress.ToString().TrimEnd('/');

        info.Environment["DOTNET_ENVIRONMENT"] = "Production";
        info.Environment["Logging__LogLevel__Default"] = "Information";
        info.Environment.Remove("OTEL_EXPORTER_OTLP_ENDPOINT");
        foreach (var (key, value) in environment)
        {
            info.Environment[key] = value.Replace("{port}", chosen.ToString(System.Globalization.CultureInfo.InvariantCulture), StringComparison.Ordinal);
        }

        return new ServerProcess(Process.Start(info)!, address, httpAddress);
    }

    /// <summary>Waits for the process to exit by itself, at most the given time.</summary>
    public async Task<bool> WaitForExitAsync(TimeSpan limit)
    {
        using var timeout = new CancellationTokenSource(limit);
        try
        {
            await _process.WaitForExitAsync(timeout.Token);
            return true;
        }
        catch (OperationCanceledException)
        {
            return false;
        }
    }

    /// <summary>SIGKILL: no final snapshot, no flush; what the disk holds is what a crash leaves.</summary>
    public void Kill()
    {
        _process.Kill(entireProcessTree: true);
        _process.WaitForExit();
    }

    /// <summary>SIGTERM, then waits for the graceful shutdown (final snapshot) to finish.</summary>
    public Task StopAsync() => ChildProcessControl.StopAsync(_process, TimeSpan.FromSeconds(20));

    public async ValueTask DisposeAsync()
    {
        await StopAsync();
        _process.Dispose();
    }

    private Task WaitHealthyAsync(Func<GrpcChannel> channelFactory) =>
        ChildProcessControl.WaitServingAsync(_process, channelFactory, () => Output, attempts: 150);

    private void Append(string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (_output)
        {
            _output.AppendLine(line);
        }
    }
}
