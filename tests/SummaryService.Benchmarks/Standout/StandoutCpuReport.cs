using System.Diagnostics;

namespace SummaryService.Benchmarks.Standout;

/// <summary>
/// <c>standout</c>: each case of <see cref="StandoutBenchmarks"/> timed in wall-clock and in this
/// process's CPU time. The answer runs on one thread, so its CPU time is what it costs on an idle
/// core; on a shared, overloaded machine the wall-clock figure mostly measures waiting.
/// </summary>
public static class StandoutCpuReport
{
    public static void Run(TextWriter output, int rounds = 5)
    {
        var bench = new StandoutBenchmarks { Groups = 1000 };
        bench.Setup();
        output.WriteLine($"groups {bench.Groups}, {rounds} rounds each after one warm-up; load average {File.ReadAllText("/proc/loadavg").Split(' ')[0]}");
        foreach (var (name, answer) in new (string, Func<object>)[] { ("rests only", () => bench.RestsOnly()), ("rank only", bench.RankOnly), ("query + rank", bench.QueryAndRank), ("query + rank, two windows", bench.QueryAndRankAgainstBefore) })
        {
            answer();
            var process = Process.GetCurrentProcess();
            TimeSpan cpuBefore = process.TotalProcessorTime;
            var wall = Stopwatch.StartNew();
            for (int i = 0; i < rounds; i++)
            {
                answer();
            }

            wall.Stop();
            process.Refresh();
            double cpu = (process.TotalProcessorTime - cpuBefore).TotalMilliseconds / rounds;
            output.WriteLine($"{name,-28} cpu {cpu,8:F1} ms   wall {wall.Elapsed.TotalMilliseconds / rounds,8:F1} ms   per answer");
        }
    }
}
