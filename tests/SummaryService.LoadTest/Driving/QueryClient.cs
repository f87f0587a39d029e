using System.Diagnostics;
using Google.Protobuf.WellKnownTypes;
using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;
using SummaryService.LoadTest.Workload;

namespace SummaryService.LoadTest.Driving;

/// <summary>
/// One dashboard-like reader: alternately a <c>Summarize</c> of the trailing hour and a <c>Timeline</c>
/// of the trailing 6 hours at 1-minute steps, each for one series picked at random (seeded), with a
/// pause between queries.
/// </summary>
public sealed class QueryClient(GrpcChannel channel, int seriesCount, ulong seed, TimeSpan pause, TimeProvider time)
{
    /// <summary>Latencies of the Summarize calls.</summary>
    public LatencySamples Summarize { get; } = new();

    /// <summary>Latencies of the Timeline calls.</summary>
    public LatencySamples Timeline { get; } = new();

    /// <summary>Failed calls.</summary>
    public long Errors { get; private set; }

    /// <summary>The first failure seen, for the report.</summary>
    public string? FirstError { get; private set; }

    /// <summary>Queries until <paramref name="cancellationToken"/> is cancelled.</summary>
    public async Task RunAsync(CancellationToken cancellationToken)
    {
        var client = new Query.QueryClient(channel);
        var random = new SeededRandom(seed);
        for (long i = 0; !cancellationToken.IsCancellationRequested; i++)
        {
            string series = LoadPlan.SeriesName(random.NextInt(seriesCount));
            long now = time.GetUtcNow().ToUnixTimeMilliseconds();
            try
            {
                long started = Stopwatch.GetTimestamp();
                if (i % 2 == 0)
                {
                    await client.SummarizeAsync(Requests.Summarize(series, now - 3_600_000, now), cancellationToken: cancellationToken).ConfigureAwait(false);
                    Summarize.Add(Stopwatch.GetElapsedTime(started).TotalMilliseconds);
                }
                else
                {
                    await client.TimelineAsync(Requests.Timeline(series, now - 21_600_000, now, TimeSpan.FromMinutes(1)), cancellationToken: cancellationToken).ConfigureAwait(false);
                    Timeline.Add(Stopwatch.GetElapsedTime(started).TotalMilliseconds);
                }

                await Task.Delay(pause, time, cancellationToken).ConfigureAwait(false);
            }
            catch (RpcException ex) when (ex.StatusCode != StatusCode.Cancelled)
            {
                Errors++;
                FirstError ??= $"{ex.StatusCode}: {ex.Status.Detail}";
            }
            catch (OperationCanceledException)
            {
                break;
            }
            catch (RpcException)
            {
                break;
            }
        }
    }
}

/// <summary>The query messages both targets receive.</summary>
public static class Requests
{
    /// <summary>Summarize one series (or every series when <paramref name="series"/> is null) over [from, to).</summary>
    public static SummarizeRequest Summarize(string? series, long from, long to, IEnumerable<double>? quantiles = null)
    {
        var request = new SummarizeRequest { Selector = Selector(series), Window = Window(from, to) };
        if (quantiles is not null)
        {
            request.Quantiles.AddRange(quantiles);
        }

        return request;
    }

    /// <summary>One summary per step for one series over [from, to).</summary>
    public static TimelineRequest Timeline(string series, long from, long to, TimeSpan step) =>
        new() { Selector = Selector(series), Window = Window(from, to), Step = Duration.FromTimeSpan(step) };

    private static Selector Selector(string? series)
    {
        var selector = new Selector { Metric = LoadPlan.Metric };
        if (series is not null)
        {
            selector.LabelEquals.Add(LoadPlan.SeriesLabel, series);
        }

        return selector;
    }

    private static Window Window(long from, long to) => new() { Range = new TimeRange { FromUnixMs = from, ToUnixMs = to } };
}
