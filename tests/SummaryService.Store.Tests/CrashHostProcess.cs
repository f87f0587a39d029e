using System.Diagnostics;

namespace SummaryService.Store.Tests;

/// <summary>Starts the crash host as its own process and follows what it acknowledges.</summary>
internal sealed class CrashHostProcess : IDisposable
{
    private readonly Process _process;
    private readonly Task _reader;

    public CrashHostProcess(string dataDirectory, ulong first, ulong resendFrom)
    {
        var start = new ProcessStartInfo("dotnet")
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        start.ArgumentList.Add(HostPath());
        start.ArgumentList.Add(dataDirectory);
        start.ArgumentList.Add(first.ToString(System.Globalization.CultureInfo.InvariantCulture));
        start.ArgumentList.Add(resendFrom.ToString(System.Globalization.CultureInfo.InvariantCulture));
        _process = Process.Start(start) ?? throw new InvalidOperationException("could not start the crash host");
        _reader = Task.Run(ReadAsync);
    }

    public HashSet<ulong> Acknowledged { get; } = [];

    public HashSet<ulong> Duplicates { get; } = [];

    public ulong HighestSent { get; private set; }

    public string? Ready { get; private set; }

    public int Lines { get; private set; }

    /// <summary>SIGKILL: no final snapshot, no flush, no goodbye.</summary>
    public void Kill()
    {
        _process.Kill(entireProcessTree: true);
        _process.WaitForExit();
        _reader.Wait(TimeSpan.FromSeconds(10));
    }

    public bool WaitForAcknowledgements(int count, TimeSpan timeout)
    {
        var watch = Stopwatch.StartNew();
        while (watch.Elapsed < timeout)
        {
            lock (Acknowledged)
            {
                if (Acknowledged.Count + Duplicates.Count >= count)
                {
                    return true;
                }
            }

            if (_process.HasExited)
            {
                return false;
            }

            Thread.Sleep(5);
        }

        return false;
    }

    public string StandardError => _process.HasExited ? _process.StandardError.ReadToEnd() : "";

    public void Dispose() => _process.Dispose();

    private async Task ReadAsync()
    {
        while (await _process.StandardOutput.ReadLineAsync() is { } line)
        {
            string[] parts = line.Split(' ', 2);
            lock (Acknowledged)
            {
                Lines++;
                switch (parts[0])
                {
                    case "READY":
                        Ready = parts[1];
                        break;
                    case "SEND":
                        HighestSent = Math.Max(HighestSent, ulong.Parse(parts[1], System.Globalization.CultureInfo.InvariantCulture));
                        break;
                    case "ACK":
                        Acknowledged.Add(ulong.Parse(parts[1], System.Globalization.CultureInfo.InvariantCulture));
                        break;
                    case "DUP":
                        Duplicates.Add(ulong.Parse(parts[1], System.Globalization.CultureInfo.InvariantCulture));
                        break;
                }
            }
        }
    }

    private static string HostPath()
    {
        // tests/SummaryService.Store.Tests/bin/<Configuration>/net10.0/ → the crash host's matching output folder.
        var output = new DirectoryInfo(AppContext.BaseDirectory.TrimEnd(Path.DirectorySeparatorChar));
        string framework = output.Name;
        string configuration = output.Parent!.Name;
        string tests = output.Parent.Parent!.Parent!.Parent!.FullName;
        string path = Path.Combine(tests, "SummaryService.Store.CrashHost", "bin", configuration, framework, "SummaryService.Store.CrashHost.dll");
        return File.Exists(path) ? path : throw new FileNotFoundException("Build the crash host first (it is a project reference of the tests).", path);
    }
}
