using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using SummaryService.Contract.V1;
using SummaryService.Server.Configuration;
using SummaryService.Server.Tests.Support;
using SummaryService.Store;
using SummaryService.Store.Segments;
using SummaryService.TestSupport;

namespace SummaryService.Server.Tests.InProcess;

/// <summary>
/// <c>Persistence:SegmentFiles</c>, <c>HotSpan</c>, <c>SegmentSpan</c> and <c>BucketsPerSpan</c>
/// reach the store, a bad value stops start-up naming the key and the value, and the server moves
/// aged buckets into segment files exactly when the settings say so.
/// </summary>
public sealed class SegmentSettingsTests
{
    [Fact]
    public void The_segment_settings_reach_the_store_options()
    {
        PersistenceSettings persistence = Bind(new()
        {
            ["Persistence:HotSpan"] = "30m",
            ["Persistence:SegmentSpan"] = "5m",
            ["Persistence:BucketsPerSpan"] = "12",
        });

        SegmentOptions segments = persistence.ToPersistenceOptions().Segments!;
        Assert.Equal(TimeSpan.FromMinutes(30), segments.HotSpan);
        Assert.Equal(TimeSpan.FromMinutes(5), segments.SegmentSpan);
        Assert.Equal(12, segments.BucketsPerSpan);
    }

    [Fact]
    public void Segment_files_off_keeps_every_bucket_in_memory()
    {
        PersistenceSettings persistence = Bind(new() { ["Persistence:SegmentFiles"] = "false" });
        Assert.Null(persistence.ToPersistenceOptions().Segments);
    }

    [Fact]
    public async Task The_shipped_settings_file_holds_the_store_defaults()
    {
        await using var server = new TestServer();
        SegmentOptions shipped = server.Services.GetRequiredService<IOptions<PersistenceSettings>>().Value.ToPersistenceOptions().Segments!;
        Assert.Equal(new SegmentOptions(), shipped);
    }

    [Theory]
    [InlineData("HotSpan", "-00:01:00", "Persistence:HotSpan is -1m; it must not be negative (0s moves every closed bucket out of memory).")]
    [InlineData("SegmentSpan", "500ms", "Persistence:SegmentSpan is 500ms; it must be at least 1s.")]
    [InlineData("SegmentSpan", "0s", "Persistence:SegmentSpan is 0s; it must be at least 1s.")]
    [InlineData("BucketsPerSpan", "0", "Persistence:BucketsPerSpan is 0; it must be at least 1.")]
    public void A_bad_segment_setting_is_refused_naming_the_key_and_the_value(string key, string value, string message)
    {
        // Checked with segment files off too, so turning them on later cannot reveal a bad value.
        foreach (string segmentFiles in new[] { "true", "false" })
        {
            ValidateOptionsResult result = new SettingsValidator().Validate(null, Bind(new() { [$"Persistence:{key}"] = value, ["Persistence:SegmentFiles"] = segmentFiles }));
            Assert.True(result.Failed, $"{key} = {value} passed");
            Assert.Equal(message, result.FailureMessage);
        }
    }

    [Fact]
    public void A_server_with_a_bad_segment_setting_does_not_start()
    {
        TestServer? server = null;
        var failure = Assert.Throws<OptionsValidationException>(() => server = new TestServer(new Dictionary<string, string?> { ["Persistence:SegmentSpan"] = "100ms" }));
        Assert.Null(server);
        Assert.Contains("Persistence:SegmentSpan is 100ms", failure.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("true", true)]
    [InlineData("false", false)]
    public async Task Aged_buckets_go_to_segment_files_only_when_the_settings_say_so(string segmentFiles, bool expectFiles)
    {
        using var data = new TempDirectory();
        await using var server = new TestServer(new Dictionary<string, string?>
        {
            ["Persistence:DataDirectory"] = data.Path,
            ["Persistence:SegmentFiles"] = segmentFiles,
            ["Persistence:HotSpan"] = "0s",
            ["Persistence:SegmentSpan"] = "1s",
            ["Persistence:BucketsPerSpan"] = "1",

            // Rollup runs only when the test asks.
            ["Persistence:RollupInterval"] = "1d",
        });

        // Ten minutes back: far past a hot span of 0s and a span of one 10 s bucket whenever the test runs.
        long tenMinutesAgo = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds() - (long)TimeSpan.FromMinutes(10).TotalMilliseconds;
        await server.Ingest.PushAsync(new Batch { Metric = "otterbyte.sorter.weight_kg", Values = { 1.5, 2.5, 4 }, TimeUnixMs = tenMinutesAgo });
        await server.Services.GetRequiredService<IStoreMaintenance>().RollAsync();

        string segments = Path.Combine(data.Path, "segments");
        int files = Directory.Exists(segments) ? Directory.GetFiles(segments, "*.seg").Length : 0;
        Assert.Equal(expectFiles, files > 0);
        var reply = await server.Query.SummarizeAsync(new SummarizeRequest
        {
            Selector = new Selector { Metric = "otterbyte.sorter.weight_kg" },
            Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) },
        });
        Assert.Equal(3ul, reply.Groups[0].Summary.Count);
        Assert.Equal(8, reply.Groups[0].Summary.Sum);
    }

    private static PersistenceSettings Bind(Dictionary<string, string?> settings) =>
        new ConfigurationBuilder().AddInMemoryCollection(settings).Build().GetSection(PersistenceSettings.SectionName).Get<PersistenceSettings>() ?? new PersistenceSettings();
}
