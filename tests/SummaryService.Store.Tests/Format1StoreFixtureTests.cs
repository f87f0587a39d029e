using System.Text.Json;
using Microsoft.Extensions.Logging.Abstractions;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Sketches.Tests.Legacy;
using SummaryService.Sketches.Tests.Support;
using SummaryService.Store.Persistence;
using SummaryService.TestSupport;

namespace SummaryService.Store.Tests;

/// <summary>
/// A data directory written by the code before log buckets (Data/Format1/store, commit 83a60e4: a
/// format-1 snapshot generation plus a log segment after it; see the README there) still opens, and
/// the store answers the recorded window queries as that code did. The log's values are replayed
/// into today's sketches (every recorded window holds some), and snapshot buckets whose KLL part
/// still held every value come back with log buckets; so each window answers with the same exact
/// figures (counts, moments, extremes, rank error) and with intervals inside the recorded ones. Where
/// a window merges more than 256 distinct non-integral values (latencies to 0.1 ms) they now count
/// as continuous data, whose modes are the log buckets' density peaks — none where the window also
/// holds buckets written before log buckets that no longer held every value.
/// (<c>Format1SketchFixtureTests</c> checks single sketches figure for figure.)
/// </summary>
public class Format1StoreFixtureTests
{
    private static readonly string Folder = Path.Combine(AppContext.BaseDirectory, "Data", "Format1");

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
            var window = new TimeWindow(recorded.GetProperty("FromUnixMs").GetInt64(), recorded.GetProperty("ToUnixMs").GetInt64());
            var answer = store.Summarize(new SeriesSelector(recorded.GetProperty("Metric").GetString()!), window, ["route"], Format1Options.Recorded);

            JsonElement now = JsonSerializer.SerializeToElement(new
            {
                Window = recorded.GetProperty("Window").GetString(),
                Metric = recorded.GetProperty("Metric").GetString(),
                window.FromUnixMs,
                window.ToUnixMs,
                answer.Covered,
                Groups = answer.Groups.Select(g => new { g.Labels, g.SeriesMerged, g.Summary }),
            });
            JsonSubset.AssertContained(recorded, now, skipping: Intervals);
            var groups = recorded.GetProperty("Groups").EnumerateArray().ToArray();
            for (int g = 0; g < groups.Length; g++)
            {
                AssertWithinRecorded(groups[g].GetProperty("Summary"), answer.Groups[g]);
            }
        }

        await store.CloseWithoutSnapshotAsync();
    }

    // Figures whose intervals may only narrow once log buckets take part, and the modes.
    private static readonly HashSet<string> Intervals =
        ["Quantiles", "FiveNumber", "Ranks", "Histogram", "Iqr", "IqrLow", "IqrHigh", "Mad", "MadLow", "MadHigh", "QuartileSkewness", "Modes", "ModesOmitted", "Exact"];

    // Every interval lies inside the recorded one, with its estimate inside the recorded interval too.
    private static void AssertWithinRecorded(JsonElement recorded, SummarizedGroup group)
    {
        var quantiles = recorded.GetProperty("Quantiles").EnumerateArray().ToArray();
        for (int i = 0; i < quantiles.Length; i++)
        {
            AssertInside(quantiles[i], group.Summary.Quantiles[i].Low, group.Summary.Quantiles[i].Value, group.Summary.Quantiles[i].High, "Low", "High");
        }

        var ranks = recorded.GetProperty("Ranks").EnumerateArray().ToArray();
        for (int i = 0; i < ranks.Length; i++)
        {
            AssertInside(ranks[i], group.Summary.Ranks[i].Low, group.Summary.Ranks[i].Fraction, group.Summary.Ranks[i].High, "Low", "High");
        }

        var bins = recorded.GetProperty("Histogram").EnumerateArray().ToArray();
        for (int i = 0; i < bins.Length; i++)
        {
            AssertInside(bins[i], group.Summary.Histogram![i].CountLow, group.Summary.Histogram[i].Count, group.Summary.Histogram[i].CountHigh, "CountLow", "CountHigh");
        }

        Assert.All(group.Summary.Modes, m => Assert.Equal(group.Sketch.Modes.IsContinuous ? Sketches.Modes.ModeKind.Region : Sketches.Modes.ModeKind.ExactValue, m.Kind));
    }

    private static void AssertInside(JsonElement recorded, double low, double value, double high, string lowName, string highName)
    {
        double recordedLow = recorded.GetProperty(lowName).GetDouble();
        double recordedHigh = recorded.GetProperty(highName).GetDouble();
        Assert.True(recordedLow <= low && high <= recordedHigh, $"[{low}, {high}] is not inside the recorded [{recordedLow}, {recordedHigh}]");
        Assert.InRange(value, recordedLow, recordedHigh);
    }

    private static PersistentSeriesStore Open(string path)
    {
        var clock = new FakeTimeProvider(DateTimeOffset.FromUnixTimeMilliseconds(1_800_000_360_000));
        return PersistentSeriesStore.Open(WrittenWith, new PersistenceOptions { DataDirectory = path }, clock, NullLogger.Instance);
    }
}
