using SummaryService.Cli.Parsing;
using SummaryService.Readable;
using SummaryService.Contract.V1;

namespace SummaryService.Cli.Tests.Parsing;

/// <summary>Durations, instants, windows and series as typed on the command line and printed everywhere.</summary>
public sealed class ParsingTests
{
    [Theory]
    [InlineData("90s", 90_000)]
    [InlineData("15m", 900_000)]
    [InlineData("6h", 21_600_000)]
    [InlineData("7d", 604_800_000)]
    [InlineData("1h30m", 5_400_000)]
    [InlineData("250ms", 250)]
    [InlineData("1.5h", 5_400_000)]
    public void Durations_read_as_a_person_means_them(string text, long ms)
    {
        Assert.True(DurationText.TryParse(text, out TimeSpan d, out string error), error);
        Assert.Equal(ms, (long)d.TotalMilliseconds); // unit sizes: common practice (1 d = 24 h, 1 h = 60 min)
    }

    [Theory]
    [InlineData("")]
    [InlineData("15")]
    [InlineData("5x")]
    [InlineData("m5")]
    [InlineData("0s")]
    public void Bad_durations_are_refused(string text) => Assert.False(DurationText.TryParse(text, out _, out _));

    [Theory]
    [InlineData(5_400_000, "1h30m")]
    [InlineData(604_800_000, "7d")]
    [InlineData(90_000, "1m30s")]
    [InlineData(250, "250ms")]
    [InlineData(0, "0s")]
    [InlineData(1_500, "1s500ms")]
    public void Durations_print_back_in_the_same_form(long ms, string text)
    {
        Assert.Equal(text, DurationText.Format(TimeSpan.FromMilliseconds(ms)));
        if (ms > 0)
        {
            Assert.True(DurationText.TryParse(text, out TimeSpan back, out _));
            Assert.Equal(ms, (long)back.TotalMilliseconds);
        }
    }

    [Fact]
    public void A_fraction_of_a_millisecond_prints_as_one() => Assert.Equal("0.5ms", DurationText.Format(TimeSpan.FromMicroseconds(500)));

    [Fact]
    public void Iso_times_without_an_offset_are_utc_and_durations_are_ago()
    {
        const long now = 1_800_000_000_000; // 2027-01-15, after every absolute time below
        Assert.True(TimePoint.TryParse("2026-12-02T01:30:00Z", now, out long utc, out _));
        Assert.Equal(new DateTimeOffset(2026, 12, 2, 1, 30, 0, TimeSpan.Zero).ToUnixTimeMilliseconds(), utc); // ISO 8601, 'Z' is UTC
        Assert.True(TimePoint.TryParse("2026-12-02T01:30:00", now, out long plain, out _));
        Assert.Equal(utc, plain);
        Assert.True(TimePoint.TryParse("2026-12-02T02:30:00+01:00", now, out long offset, out _));
        Assert.Equal(utc, offset);
        Assert.True(TimePoint.TryParse("now-2h", now, out long ago, out _));
        Assert.Equal(now - 7_200_000, ago);
        Assert.True(TimePoint.TryParse("now-1h30m", now, out long longer, out _));
        Assert.Equal(now - 5_400_000, longer);
        Assert.True(TimePoint.TryParse("now", now, out long current, out _));
        Assert.Equal(now, current);
        Assert.Equal("2026-12-02T01:30:00Z", TimePoint.Format(utc));
    }

    [Theory]
    [InlineData("2h", "'2h' is a length, not an instant; for that long ago write now-2h.")]
    [InlineData("now-", "'now-': a duration is empty;")]
    [InlineData("yesterday", "'yesterday' is not an instant;")]
    public void A_bare_duration_is_never_an_instant(string text, string message)
    {
        Assert.False(TimePoint.TryParse(text, 1_800_000_000_000, out _, out string error));
        Assert.StartsWith(message, error, StringComparison.Ordinal);
    }

    [Fact]
    public void Windows_are_a_trailing_duration_or_a_range()
    {
        const long now = 1_800_000_000_000; // 2027-01-15, after every absolute time below
        Assert.True(WindowText.TryParse("1h", now, out Window last, out _));
        Assert.Equal(3600, last.Last.Seconds);
        Assert.True(WindowText.TryParse("now-3h..now-1h", now, out Window range, out _));
        Assert.Equal(now - 10_800_000, range.Range.FromUnixMs);
        Assert.Equal(now - 3_600_000, range.Range.ToUnixMs);
        Assert.True(WindowText.TryParse("2026-12-02T01:00:00Z..now", now, out Window open, out _));
        Assert.Equal(now, open.Range.ToUnixMs);
        Assert.False(WindowText.TryParse("now-1h..now-3h", now, out _, out string error));
        Assert.Contains("not before its end", error, StringComparison.Ordinal);
        Assert.False(WindowText.TryParse("3h..1h", now, out _, out string bare));
        Assert.Contains("is a length, not an instant", bare, StringComparison.Ordinal);
    }

    [Fact]
    public void Label_matchers_need_a_name_and_an_equals_sign()
    {
        Assert.True(LabelText.TryParse(["region=north", "route=/a=b"], out var labels, out _));
        Assert.Equal("/a=b", labels["route"]);
        Assert.False(LabelText.TryParse(["region"], out _, out _));
        Assert.False(LabelText.TryParse(["=x"], out _, out _));
        Assert.False(LabelText.TryParse(["a=1", "a=2"], out _, out _));
    }

    [Fact]
    public void Times_print_as_iso_8601_utc_and_beside_unix_ms_in_messages()
    {
        // 1,796,175,000 s after 1970-01-01T00:00:00Z is 2026-12-02T01:30:00Z (checked with Python's datetime).
        Assert.Equal("2026-12-02T01:30:00Z", TimeText.Iso(1_796_175_000_000));
        Assert.Equal("2026-12-02T01:30:00.250Z", TimeText.Iso(1_796_175_000_250));
        Assert.Equal("2026-12-02T01:30:00Z (Unix ms 1796175000000)", TimeText.IsoAndUnixMs(1_796_175_000_000));
    }

    [Fact]
    public void A_series_reads_as_its_metric_then_its_labels_in_name_order()
    {
        var labels = new Dictionary<string, string> { ["service"] = "checkout", ["region"] = "north" };
        Assert.Equal("otterbyte.checkout.latency_ms · region=north · service=checkout", SeriesName.Of("otterbyte.checkout.latency_ms", labels));
        Assert.Equal("otterbyte.checkout.latency_ms", SeriesName.Of("otterbyte.checkout.latency_ms", []));
    }
}
