using System.Text.Json;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Summaries;
using SummaryService.Sketches.Tests.Support;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// A data directory written by the code before log buckets (Data/Format1/store, commit 83a60e4: a
/// format-1 snapshot generation plus a log segment after it; see the README there) still opens, and
/// the store answers the recorded window queries as that code did.
/// </summary>
public class Format1StoreFixtureTests
{
    private static readonly string Folder = Path.Combine(AppContext.BaseDirectory, "Data", "Format1");

    private static readonly SummaryOptions RecordedOptions = new()
    {
        Quantiles = [0, 0.01, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999, 1],
        RankOf = [-5, 0, 1, 10, 100, 250],
        Histogram = HistogramSpec.Automatic(10),
        MaxModes = 5,
    };

    // The tier layout the fixture was written with.
    private static readonly StoreOptions WrittenWith = new()
    {
        ShardCount = 4,
        Tiers =
        [
            new(TimeSpan.FromSeconds(10), TimeSpan.FromHours(6)),
            new(TimeSpan.FromMinutes(1), TimeSpan.FromDays(7)),
            new(TimeSpan.FromHours(1), TimeSpan.FromDays(90)),
        ],
    };

    [Fact]
    public async Task A_format_1_data_directory_opens_with_its_snapshot_and_its_log()
    {
        using var dir = new TempDirectory();
        TempDirectory.Copy(Path.Combine(Folder, "store"), dir.Path);
        var store = Open(dir.Path);

        Assert.Equal(1UL, store.Recovery.SnapshotGeneration);
        Assert.Equal(37, store.Recovery.LogRecordsReplayed);
        Assert.Empty(store.Recovery.Warnings);
        await store.CloseWithoutSnapshotAsync();
    }

    [Fact]
    public async Task Every_recorded_window_answer_is_given_again()
    {
        using var dir = new TempDirectory();
        TempDirectory.Copy(Path.Combine(Folder, "store"), dir.Path);
        var store = Open(dir.Path);

        foreach (string line in File.ReadLines(Path.Combine(Folder, "store-answers.jsonl")))
        {
            JsonElement recorded = JsonDocument.Parse(line).RootElement;
            var window = new TimeRange(recorded.GetProperty("FromUnixMs").GetInt64(), recorded.GetProperty("ToUnixMs").GetInt64());
            var answer = store.Summarize(new Selector(recorded.GetProperty("Metric").GetString()!), window, ["route"], RecordedOptions);

            JsonElement now = JsonSerializer.SerializeToElement(new
            {
                Window = recorded.GetProperty("Window").GetString(),
                Metric = recorded.GetProperty("Metric").GetString(),
                window.FromUnixMs,
                window.ToUnixMs,
                answer.Covered,
                Groups = answer.Groups.Select(g => new { g.Labels, g.SeriesMerged, g.Summary }),
            });
            JsonSubset.AssertContained(recorded, now);
        }

        await store.CloseWithoutSnapshotAsync();
    }

    private static PersistentSeriesStore Open(string path)
    {
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_360_000));
        return PersistentSeriesStore.Open(WrittenWith, new PersistenceOptions { DataDirectory = path }, clock, NullLogger.Instance);
    }
}
