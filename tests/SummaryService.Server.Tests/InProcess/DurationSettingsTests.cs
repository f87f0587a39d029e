using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.InProcess;

/// <summary>Durations in configuration read in the syntax used everywhere else; the .NET form still works.</summary>
public sealed class DurationSettingsTests
{
    [Fact]
    public void Settings_take_durations_as_people_write_them_and_in_the_dotnet_form()
    {
        IConfiguration configuration = new ConfigurationBuilder().AddInMemoryCollection(new Dictionary<string, string?>
        {
            ["Persistence:SnapshotInterval"] = "1h30m",
            ["Persistence:RollupInterval"] = "00:00:20",
            ["Persistence:LogSyncInterval"] = "0.5ms",
            ["Store:MaxFuture"] = "90s",
            ["Store:ProducerMarkRetention"] = "2w",
            ["Store:Tiers:0:BucketWidth"] = "10s",
            ["Store:Tiers:0:Retention"] = "6h",
            ["Store:Tiers:1:BucketWidth"] = "1m",
            ["Store:Tiers:1:Retention"] = "7.00:00:00",
        }).Build();

        PersistenceSettings persistence = configuration.GetSection(PersistenceSettings.SectionName).Get<PersistenceSettings>()!;
        StoreSettings store = configuration.GetSection(StoreSettings.SectionName).Get<StoreSettings>()!;
        Assert.Equal(TimeSpan.FromMinutes(90), (TimeSpan)persistence.SnapshotInterval);
        Assert.Equal(TimeSpan.FromSeconds(20), (TimeSpan)persistence.RollupInterval);
        Assert.Equal(TimeSpan.FromMicroseconds(500), (TimeSpan)persistence.LogSyncInterval);
        Assert.Equal(TimeSpan.FromSeconds(90), (TimeSpan)store.MaxFuture);
        Assert.Equal(TimeSpan.FromDays(14), (TimeSpan)store.ProducerMarkRetention);
        Assert.Equal([TimeSpan.FromSeconds(10), TimeSpan.FromMinutes(1)], store.Tiers.Select(t => (TimeSpan)t.BucketWidth));
        Assert.Equal([TimeSpan.FromHours(6), TimeSpan.FromDays(7)], store.Tiers.Select(t => (TimeSpan)t.Retention));
    }

    [Fact]
    public async Task The_shipped_settings_file_reads_in_the_duration_syntax()
    {
        await using var server = new TestServer();
        PersistenceSettings persistence = server.Services.GetRequiredService<IOptions<PersistenceSettings>>().Value;
        Assert.Equal(TimeSpan.FromSeconds(30), (TimeSpan)persistence.SnapshotInterval); // appsettings.json: "30s"
        Assert.Equal(TimeSpan.FromMinutes(5), (TimeSpan)server.Services.GetRequiredService<IOptions<StoreSettings>>().Value.MaxFuture); // "5m"
    }

    [Fact]
    public void A_duration_setting_out_of_range_is_named_in_the_same_syntax()
    {
        ValidateOptionsResult result = new SettingsValidator().Validate(null, new PersistenceSettings { SnapshotInterval = TimeSpan.FromMilliseconds(500) });
        Assert.True(result.Failed);
        Assert.Equal("Persistence:SnapshotInterval is 500ms; it must be at least 1s.", result.FailureMessage);
    }

    [Fact]
    public void A_duration_that_is_neither_form_is_refused_saying_how_to_write_it()
    {
        Assert.False(DurationSetting.TryParse("90 seconds", out _, out string error));
        Assert.Contains("90s", error, StringComparison.Ordinal);
        Assert.True(DurationSetting.TryParse("0s", out DurationSetting zero, out _)); // a group-commit interval of 0 is a setting
        Assert.Equal(TimeSpan.Zero, (TimeSpan)zero);
        Assert.Equal("1h30m", new DurationSetting(TimeSpan.FromMinutes(90)).ToString());
    }
}
