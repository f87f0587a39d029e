using System.CommandLine;
using Spectre.Console;
using SummaryService.Cli.Demo;
using SummaryService.Cli.Parsing;
using SummaryService.Readable;

namespace SummaryService.Cli.Commands;

/// <summary>
/// <c>demo</c>: back-fills the last hours of the fictional Otterbyte Parcels' traffic, with a deploy
/// partway through that widens checkout's latency tail, prints the commands that show it, then streams
/// live traffic until Ctrl+C (or <c>--duration</c>).
/// </summary>
public static class DemoCommand
{
    /// <summary>The finest tier's retention at the server's defaults: back-filled values stay in 10 s buckets.</summary>
    public static readonly TimeSpan LongestBackfill = TimeSpan.FromHours(6);

    /// <summary>Builds the command.</summary>
    public static Command Create(CommandRunner runner, CommonOptions common)
    {
        ArgumentNullException.ThrowIfNull(runner);
        ArgumentNullException.ThrowIfNull(common);
        var command = new Command("demo", $"Feed the demo scenario ({OtterbyteScenario.Company}): back-fill recent hours with a deploy partway, then stream live.");
        var backfill = new Option<string>("--backfill") { Description = "How far back to fill (at most 6h, the finest tier's retention).", HelpName = "duration", DefaultValueFactory = _ => "3h" };
        var deployAgo = new Option<string?>("--deploy-ago") { Description = "When checkout's release widened its tail (default half the back-fill ago).", HelpName = "duration" };
        var rate = new Option<int>("--rate") { Description = "Values per second per service.", DefaultValueFactory = _ => 20 };
        var duration = new Option<string?>("--duration") { Description = "Stop streaming live after this long; without it, streams until Ctrl+C.", HelpName = "duration" };
        var seed = new Option<int>("--seed") { Description = "Seed of the random source: the same seed gives the same values.", DefaultValueFactory = _ => 20261202 };
        command.Add(backfill);
        command.Add(deployAgo);
        command.Add(rate);
        command.Add(duration);
        command.Add(seed);
        runner.Bind(command, async run =>
        {
            var p = run.Parse;
            TimeSpan back = Duration(p.GetValue(backfill)!, "--backfill");
            if (back > LongestBackfill)
            {
                throw new UsageException($"--backfill {p.GetValue(backfill)} reaches past 6h, the finest tier's retention; pick 6h or less.");
            }

            TimeSpan deploy = p.GetValue(deployAgo) is string d ? Duration(d, "--deploy-ago") : back / 2;
            if (deploy >= back)
            {
                throw new UsageException($"--deploy-ago {DurationText.Format(deploy)} must lie inside the back-fill of {DurationText.Format(back)}.");
            }

            int perSecond = p.GetValue(rate);
            if (perSecond is < 1 or > 10_000)
            {
                throw new UsageException($"--rate {perSecond} must lie between 1 and 10000 values per second.");
            }

            TimeSpan? live = p.GetValue(duration) is string l ? Duration(l, "--duration") : null;
            IAnsiConsole console = run.Console.Out;
            long now = run.NowMs;

            // Whole minutes, so both sides of a comparison across the deploy are whole buckets of every tier up to 1 min.
            long deployMs = (now - (long)deploy.TotalMilliseconds) / 60_000 * 60_000;
            long startMs = now - (long)back.TotalMilliseconds;
            string producer = $"demo-{p.GetValue(seed)}-{now}";
            await using var feed = new DemoFeed(run.Server.Ingest, new DemoRandom(p.GetValue(seed)), producer);

            console.WriteLine($"{OtterbyteScenario.Company}: {OtterbyteScenario.Services.Count} services in {OtterbyteScenario.Regions.Count} regions (labels service, route, region):");
            foreach (DemoService service in OtterbyteScenario.Services)
            {
                console.WriteLine($"  {service.Metric,-32} {service.Shape}");
            }

            console.WriteLine($"back-filling {DurationText.Format(back)} at {perSecond} values/s per service; checkout's release lands at {TimePoint.Format(deployMs)} …");
            long started = run.Time.GetTimestamp();
            const long chunk = 30 * 60_000;
            for (long from = startMs; from < now; from += chunk)
            {
                long to = Math.Min(now, from + chunk);
                await feed.FeedAsync(from, to, perSecond, deployMs, run.Cancellation);
                console.WriteLine($"  … up to {TimePoint.Format(to)} ({feed.Accepted} values acknowledged)");
            }

            console.WriteLine($"back-filled {TimePoint.Format(startMs)} → {TimePoint.Format(now)} in {DurationText.Format(TimeSpan.FromSeconds(Math.Round(run.Time.GetElapsedTime(started).TotalSeconds)))}.");
            PrintTryThis(run.Console, common, run, startMs, deployMs);

            long until = live is null ? long.MaxValue : run.NowMs + (long)live.Value.TotalMilliseconds;
            console.WriteLine(live is null ? "streaming live traffic; Ctrl+C stops." : $"streaming live traffic for {DurationText.Format(live.Value)} …");
            long sent = now;
            try
            {
                using var ticks = new PeriodicTimer(TimeSpan.FromSeconds(1), run.Time);
                while (run.NowMs < until && await ticks.WaitForNextTickAsync(run.Cancellation))
                {
                    long upTo = Math.Min(run.NowMs, until);
                    await feed.FeedAsync(sent, upTo, perSecond, deployMs, run.Cancellation);
                    sent = upTo;
                }
            }
            catch (OperationCanceledException) when (run.Cancellation.IsCancellationRequested)
            {
                // Ctrl+C: whatever was drawn is sent below.
            }

            await feed.FlushAsync();
            await feed.CompleteAsync();
            console.WriteLine($"sent {feed.Accepted} values in all; the server keeps them (snapshot and log) for the commands above.");
            if (feed.Failure is { } failure)
            {
                run.Console.Error.WriteLine($"error: batch {failure.Sequence} was refused ({failure.ErrorCode}): {failure.Error}");
                return ExitCodes.ServerError;
            }

            return ExitCodes.Ok;
        });
        return command;
    }

    private static void PrintTryThis(CliConsole console, CommonOptions common, Invocation run, long startMs, long deployMs)
    {
        string server = run.Parse.GetValue(common.Server)!;
        string suffix = server == CommonOptions.DefaultServer ? "" : $" --server {server}";
        string before = $"{TimePoint.Format(startMs)}..{TimePoint.Format(deployMs)}";
        string after = $"{TimePoint.Format(deployMs)}..now";
        console.Out.WriteLine();
        console.Out.WriteLine("Try these in another terminal (from the repository, 'sumq' is 'dotnet run --project src/SummaryService.Cli --'):");
        (string Why, string Command)[] lines =
        [
            ("checkout before and after the release: p90 and p99 moved up (p99 several-fold, see b / a); the median is inconclusive", $"shift {OtterbyteScenario.Checkout} --a {before} --b {after} --quantile 0.5 --quantile 0.9 --quantile 0.99"),
            ("did one region carry checkout's p99 rise? each region's move against the others'", $"standout {OtterbyteScenario.Checkout} --by region --window {after} --before {before} --rank-by ratio --at 0.99"),
            ("pricing did not change: every quantile is inconclusive with a ratio near ×1", $"shift {OtterbyteScenario.Pricing} --a {before} --b {after} --quantile 0.5 --quantile 0.9 --quantile 0.99"),
            ("checkout before the release: skewness and the mean–median gap", $"window {OtterbyteScenario.Checkout} --from {TimePoint.Format(startMs)} --to {TimePoint.Format(deployMs)}"),
            ("… and after it", $"window {OtterbyteScenario.Checkout} --from {TimePoint.Format(deployMs)}"),
            ("the catalogue service's two humps (cache hit or miss) in the histogram", $"window {OtterbyteScenario.Catalogue} --last 1h --bins 24"),
            ("status codes: the modes say what happened", $"window {OtterbyteScenario.Status} --last 1h --bins 0 --modes 4"),
            ("queue depth per region", $"window {OtterbyteScenario.QueueDepth} --last 30m --group-by region --bins 0"),
            ("checkout's p99 per 10 minutes, as a sparkline", $"trend {OtterbyteScenario.Checkout} --last 3h --step 10m --plot 0.99"),
            ("two label sets: north against south", $"shift {OtterbyteScenario.Checkout} --a 30m --b 30m --a-label region=north --b-label region=south"),
            ("live view per region", $"follow {OtterbyteScenario.Checkout} --last 1m --group-by region"),
            ("the series the server holds", "catalogue"),
        ];
        foreach (var (why, command) in lines)
        {
            console.Out.WriteLine($"  # {why}");
            console.WriteRaw($"  {CliApp.Name} {command}{suffix}");
        }

        console.Out.WriteLine();
    }

    private static TimeSpan Duration(string text, string option) =>
        DurationText.TryParse(text, out TimeSpan d, out string error) ? d : throw new UsageException($"{option}: {error}");
}
