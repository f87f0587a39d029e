using System.Diagnostics;
using SummaryService.LoadTest.Report;

namespace SummaryService.LoadTest.Processes;

/// <summary>CPU used from its creation until <see cref="Share"/>: by the server (all its nodes), by this generator, and by the rest of the machine.</summary>
public sealed class CpuMeter
{
    private readonly IReadOnlyList<int> _serverPids;
    private readonly long _started = Stopwatch.GetTimestamp();
    private readonly double _server;
    private readonly double _generator;
    private readonly double _machine;

    /// <summary>Takes the starting readings.</summary>
    public CpuMeter(IReadOnlyList<int> serverPids)
    {
        _serverPids = serverPids;
        _server = ServerCpuSeconds();
        _generator = GeneratorCpuSeconds();
        _machine = ProcFigures.MachineCpuSeconds().Busy;
    }

    /// <summary>Average cores in use since creation.</summary>
    public CpuShare Share()
    {
        double wall = Stopwatch.GetElapsedTime(_started).TotalSeconds;
        double server = ServerCpuSeconds() - _server;
        double generator = GeneratorCpuSeconds() - _generator;
        double machine = ProcFigures.MachineCpuSeconds().Busy - _machine;
        return new CpuShare(server / wall, generator / wall, Math.Max(0, machine - server - generator) / wall, server);
    }

    private double ServerCpuSeconds() => _serverPids.Sum(ProcFigures.CpuSeconds);

    private static double GeneratorCpuSeconds()
    {
        using var self = Process.GetCurrentProcess();
        return self.TotalProcessorTime.TotalSeconds;
    }
}
