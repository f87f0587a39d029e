using System.Diagnostics;
using System.Globalization;
using Grpc.Net.Client;
using SummaryService.TestSupport;

namespace SummaryService.LoadTest.Processes;

/// <summary>
/// A server under test as a child process on a free loopback port: the real server's build output,
/// or this program in <c>baseline-server</c> mode. Its process id is what the CPU and memory figures
/// are read from; it is stopped with SIGTERM so the real server writes its final snapshot.
/// </summary>
public sealed class ChildServer : IAsyncDisposable
{
    private readonly Process _process;
    private readonly Queue<string> _lastLines = new();

    private ChildServer(Process process, Uri address)
    {
        _process = process;
        Address = address;
        process.OutputDataReceived += (_, e) => Keep(e.Data);
        process.ErrorDataReceived += (_, e) => Keep(e.Data);
        process.BeginOutputReadLine();
        process.BeginErrorReadLine();
    }

    /// <summary>The gRPC address on loopback.</summary>
    public Uri Address { get; }

    /// <summary>The child's process id (the dotnet host runs the app in its own process).</summary>
    public int Pid => _process.Id;

    /// <summary>The real server, configured through environment variables like an operator would.</summary>
    public static Task<ChildServer> StartSketchServerAsync(string? serverDll, string dataDirectory, string durability, IReadOnlyDictionary<string, string> extra, CancellationToken cancellationToken)
    {
        int port = ServerProcess.FreePort();
        string dll = serverDll ?? ServerProcess.ServerDll;
        var info = new ProcessStartInfo("dotnet") { WorkingDirectory = Path.GetDirectoryName(dll)! };
        info.ArgumentList.Add(dll);
        info.Environment["Kestrel__Endpoints__Grpc__Url"] = $"http://127.0.0.1:{port}";
        info.Environment["Kestrel__Endpoints__Http__Url"] = $"http://127.0.0.1:{ServerProcess.FreePort()}";
        info.Environment["Persistence__DataDirectory"] = dataDirectory;
        info.Environment["Persistence__Durability"] = durability;
        info.Environment["Logging__LogLevel__Default"] = "Warning";
        foreach (var (key, value) in extra)
        {
            info.Environment[key] = value;
        }

        return StartAsync(info, port, cancellationToken);
    }

    /// <summary>This program as the exact raw-value baseline server.</summary>
    public static Task<ChildServer> StartBaselineAsync(CancellationToken cancellationToken)
    {
        int port = ServerProcess.FreePort();
        var info = new ProcessStartInfo("dotnet");
        info.ArgumentList.Add(typeof(ChildServer).Assembly.Location);
        info.ArgumentList.Add("baseline-server");
        info.ArgumentList.Add(port.ToString(CultureInfo.InvariantCulture));
        return StartAsync(info, port, cancellationToken);
    }

    /// <summary>SIGTERM, then up to two minutes for the graceful stop (the final snapshot), then a kill.</summary>
    public Task StopAsync() => ChildProcessControl.StopAsync(_process, TimeSpan.FromMinutes(2));

    /// <summary>The child's last lines of output, for error reports.</summary>
    public string Tail()
    {
        lock (_lastLines)
        {
            return string.Join('\n', _lastLines);
        }
    }

    /// <inheritdoc/>
    public async ValueTask DisposeAsync()
    {
        await StopAsync().ConfigureAwait(false);
        _process.Dispose();
    }

    private static async Task<ChildServer> StartAsync(ProcessStartInfo info, int port, CancellationToken cancellationToken)
    {
        info.RedirectStandardOutput = true;
        info.RedirectStandardError = true;
        info.UseShellExecute = false;
        info.Environment["DOTNET_ENVIRONMENT"] = "Production";
        info.Environment.Remove("OTEL_EXPORTER_OTLP_ENDPOINT");
        var child = new ChildServer(Process.Start(info)!, new Uri($"http://127.0.0.1:{port}"));
        try
        {
            await child.WaitHealthyAsync(cancellationToken).ConfigureAwait(false);
            return child;
        }
        catch
        {
            await child.DisposeAsync().ConfigureAwait(false);
            throw;
        }
    }

    private Task WaitHealthyAsync(CancellationToken cancellationToken) =>
        ChildProcessControl.WaitServingAsync(_process, () => GrpcChannel.ForAddress(Address), Tail, attempts: 300, cancellationToken);

    private void Keep(string? line)
    {
        if (line is null)
        {
            return;
        }

        lock (_lastLines)
        {
            _lastLines.Enqueue(line);
            if (_lastLines.Count > 50)
            {
                _lastLines.Dequeue();
            }
        }
    }
}
