using System.Globalization;
using System.Runtime.InteropServices;
using SummaryService.LoadTest;
using SummaryService.LoadTest.Baseline;
using SummaryService.LoadTest.Report;
using SummaryService.LoadTest.Workload;

// `baseline-server PORT` serves the exact baseline; `retention ...` measures what days of a steady
// series cost (see RetentionRun); anything else is a load run (see LoadOptions).
if (args.Length >= 2 && args[0] == "baseline-server")
{
    return await BaselineServer.RunAsync(int.Parse(args[1], CultureInfo.InvariantCulture));
}

if (args.Length >= 1 && args[0] == "retention")
{
    return await SummaryService.LoadTest.Retention.RetentionRun.RunAsync(args[1..]);
}

LoadOptions options;
try
{
    options = LoadOptions.Parse(args);
}
catch (ArgumentException ex)
{
    Console.Error.WriteLine($"error: {ex.Message}");
    return 2;
}

using var limit = new CancellationTokenSource(TimeSpan.FromMinutes(options.TimeoutMinutes));
TimeProvider time = TimeProvider.System;
var machine = new MachineFigures(Environment.ProcessorCount, SummaryService.LoadTest.Processes.ProcFigures.LoadAverage(), RuntimeInformation.FrameworkDescription, time.GetUtcNow().ToString("u", CultureInfo.InvariantCulture));
var plan = new LoadPlan(options.Seed, options.Series, options.BatchSize, options.PerBucket, options.Buckets, time.GetUtcNow().ToUnixTimeMilliseconds());
var run = new TargetRun(options, plan, time);
TargetFigures sketch = await run.RunAsync(baseline: false, limit.Token);
TargetFigures? exact = options.Baseline ? await run.RunAsync(baseline: true, limit.Token) : null;
var figures = new RunFigures(options.CommandLine(), machine, sketch, exact, ReportWriter.Ratios(sketch, exact));
ReportWriter.WriteTable(Console.Out, figures);
if (options.JsonOut is { } path)
{
    ReportWriter.WriteJson(path, figures);
}

return Failures(figures) switch
{
    [] => 0,
    var failures => Fail(failures),
};

static int Fail(List<string> failures)
{
    foreach (string failure in failures)
    {
        Console.Error.WriteLine($"FAILED: {failure}");
    }

    return 1;
}

// A run that lost values, met errors or miscounted a window is a failed run, whatever its speed.
static List<string> Failures(RunFigures figures)
{
    var failures = new List<string>();
    foreach (TargetFigures t in new[] { figures.Sketch, figures.Baseline }.OfType<TargetFigures>())
    {
        long errors = t.Fill.Errors + t.Live.Errors + t.Queries.Errors;
        if (errors > 0)
        {
            failures.Add($"{t.Target}: {errors} error replies or failed queries.");
        }

        if (t.Fill.Duplicates + t.Live.Duplicates > 0)
        {
            failures.Add($"{t.Target}: {t.Fill.Duplicates} back-fill and {t.Live.Duplicates} live batches answered as duplicates; each was sent once, so their values were not applied.");
        }

        if (t.Live.Values == 0 || t.Fill.Values == 0)
        {
            failures.Add($"{t.Target}: an ingest phase acknowledged no values.");
        }

        foreach (NamedCheck check in t.Checks)
        {
            if (check.Result.ExactCount != check.Result.ReportedCount)
            {
                failures.Add($"{t.Target}: {check.Window} counted {check.Result.ReportedCount} values; the generator sent {check.Result.ExactCount}.");
            }
        }
    }

    return failures;
}
