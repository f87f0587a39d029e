using BenchmarkDotNet.Running;
using SummaryService.Benchmarks.Sizes;
using SummaryService.Benchmarks.Store;

namespace SummaryService.Benchmarks;

/// <summary>
/// Entry point: <c>sizes</c> prints the size report, <c>standout</c> the CPU-time report of Query.Standout's work at 1,000 groups, <c>store [quick] [queries]</c> runs the store bench (only its window query figures with <c>queries</c>), anything
/// else goes to BenchmarkDotNet.
/// </summary>
public static class Program
{
    public static int Main(string[] args)
    {
        // These report counts and seconds-long rates, not nanosecond timings, so they skip
        // BenchmarkDotNet's process-per-case machinery.
        switch (args.FirstOrDefault())
        {
            case "sizes":
                SizesReport.Write(Console.Out);
                return 0;
            case "standout":
                Standout.StandoutCpuReport.Run(Console.Out);
                return 0;
            case "store":
                StoreBench.Run(Console.Out, quick: args.Contains("quick"), queriesOnly: args.Contains("queries"), appendOnly: args.Contains("append"));
                return 0;
        }

        var summaries = BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args);
        return summaries.Any(s => s.HasCriticalValidationErrors) ? 1 : 0;
    }
}
