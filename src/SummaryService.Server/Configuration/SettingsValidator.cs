using Microsoft.Extensions.Options;
using SummaryService.Server.Auth;

namespace SummaryService.Server.Configuration;

/// <summary>
/// Start-up checks of every section, so a bad setting stops the server with a message naming it
/// instead of surfacing later as a confusing runtime error.
/// </summary>
internal sealed class SettingsValidator :
    IValidateOptions<StoreSettings>,
    IValidateOptions<PersistenceSettings>,
    IValidateOptions<ServerSettings>,
    IValidateOptions<AuthSettings>
{
    /// <inheritdoc/>
    public ValidateOptionsResult Validate(string? name, StoreSettings options)
    {
        try
        {
            options.ToStoreOptions().Validate();
            if (options.SketchK is < Sketches.Quantiles.KllSketch.MinK or > Sketches.Quantiles.KllSketch.MaxK)
            {
                return Fail($"Store:SketchK is {options.SketchK}; it must lie in [{Sketches.Quantiles.KllSketch.MinK}, {Sketches.Quantiles.KllSketch.MaxK}].");
            }

            if (options.LogScale is < 0 or > Sketches.Buckets.LogBucketSketch.MaxScale)
            {
                return Fail($"Store:LogScale is {options.LogScale}; it must lie in [0, {Sketches.Buckets.LogBucketSketch.MaxScale}] (6 gives a relative bound of 0.54%).");
            }

            if (options.LogMaxBuckets is < Sketches.Buckets.LogBucketSketch.MinMaxBuckets or > Sketches.Buckets.LogBucketSketch.MaxMaxBuckets)
            {
                return Fail($"Store:LogMaxBuckets is {options.LogMaxBuckets}; it must lie in [{Sketches.Buckets.LogBucketSketch.MinMaxBuckets}, {Sketches.Buckets.LogBucketSketch.MaxMaxBuckets}].");
            }

            if (!(options.ModeResolution >= 0) || !double.IsFinite(options.ModeResolution))
            {
                return Fail($"Store:ModeResolution is {options.ModeResolution}; use 0 for exact values or a positive bin width.");
            }

            if (options.MaxFuture < TimeSpan.Zero || options.MemoryBudgetBytes < 1)
            {
                return Fail($"Store:MaxFuture ({options.MaxFuture}) must not be negative and Store:MemoryBudgetBytes ({options.MemoryBudgetBytes}) must be positive.");
            }

            return ValidateOptionsResult.Success;
        }
        catch (ArgumentException ex)
        {
            return Fail($"Store:{ex.ParamName}: {ex.Message}");
        }
    }

    /// <inheritdoc/>
    public ValidateOptionsResult Validate(string? name, PersistenceSettings options)
    {
        if (!Enum.IsDefined(options.Durability))
        {
            return Fail($"Persistence:Durability is {options.Durability}; use Wal, Snapshot or None.");
        }

        if (string.IsNullOrWhiteSpace(options.DataDirectory))
        {
            return Fail("Persistence:DataDirectory is empty; give a directory for snapshots and the log.");
        }

        if (options.SnapshotInterval < TimeSpan.FromSeconds(1))
        {
            return Fail($"Persistence:SnapshotInterval is {options.SnapshotInterval}; it must be at least 1s.");
        }

        if (options.LogSyncInterval < TimeSpan.Zero || options.LogSyncInterval > TimeSpan.FromSeconds(1))
        {
            return Fail($"Persistence:LogSyncInterval is {options.LogSyncInterval}; it must lie between 0s and 1s.");
        }

        if (options.SnapshotsKept < 1)
        {
            return Fail($"Persistence:SnapshotsKept is {options.SnapshotsKept}; at least 1 generation must be kept.");
        }

        if (options.RollupInterval < TimeSpan.FromMilliseconds(100))
        {
            return Fail($"Persistence:RollupInterval is {options.RollupInterval}; it must be at least 100ms.");
        }

        return ValidateSegments(options);
    }

    // Checked even when segment files are off, so turning them on later cannot reveal a bad value.
    private static ValidateOptionsResult ValidateSegments(PersistenceSettings options)
    {
        if (options.HotSpan < TimeSpan.Zero)
        {
            return Fail($"Persistence:HotSpan is {options.HotSpan}; it must not be negative (0s moves every closed bucket out of memory).");
        }

        if (options.SegmentSpan < TimeSpan.FromSeconds(1))
        {
            return Fail($"Persistence:SegmentSpan is {options.SegmentSpan}; it must be at least 1s.");
        }

        return options.BucketsPerSpan < 1
            ? Fail($"Persistence:BucketsPerSpan is {options.BucketsPerSpan}; it must be at least 1.")
            : ValidateOptionsResult.Success;
    }

    /// <inheritdoc/>
    public ValidateOptionsResult Validate(string? name, ServerSettings options)
    {
        if (options.MaxMessageBytes < 1024)
        {
            return Fail($"Server:MaxMessageBytes is {options.MaxMessageBytes}; it must be at least 1024.");
        }

        if (options.MaxIngestBytesHeld < options.MaxMessageBytes)
        {
            return Fail($"Server:MaxIngestBytesHeld is {options.MaxIngestBytesHeld}; it must be at least Server:MaxMessageBytes ({options.MaxMessageBytes}).");
        }

        if (options.WatchMaxLag < TimeSpan.FromSeconds(1))
        {
            return Fail($"Server:WatchMaxLag is {options.WatchMaxLag}; it must be at least 1s.");
        }

        if (options.WatchMinInterval < TimeSpan.FromMilliseconds(1) || options.WatchInterval.Value < options.WatchMinInterval.Value)
        {
            return Fail($"Server:WatchMinInterval is {options.WatchMinInterval} and Server:WatchInterval {options.WatchInterval}; the minimum must be at least 1ms and the default at least the minimum.");
        }

        if (options.RefusalLogInterval < TimeSpan.FromSeconds(1))
        {
            return Fail($"Server:RefusalLogInterval is {options.RefusalLogInterval}; it must be at least 1s.");
        }

        return options.MaxTimelineSteps < 1
            ? Fail($"Server:MaxTimelineSteps is {options.MaxTimelineSteps}; it must be at least 1.")
            : ValidateOptionsResult.Success;
    }

    /// <inheritdoc/>
    public ValidateOptionsResult Validate(string? name, AuthSettings options)
    {
        for (int i = 0; i < options.Keys.Count; i++)
        {
            ApiKeySettings key = options.Keys[i];
            if (key.Sha256.Length != 64 || !key.Sha256.All(char.IsAsciiHexDigit))
            {
                return Fail($"Auth:Keys:{i}:Sha256 is '{key.Sha256}'; give the 64 hexadecimal digits of the key's SHA-256 hash.");
            }

            foreach (string scope in key.Scopes)
            {
                if (!ScopeNames.TryParse(scope, out _))
                {
                    return Fail($"Auth:Keys:{i}:Scopes has '{scope}'; scopes are write, read and admin.");
                }
            }

            if (key.Scopes.Count == 0)
            {
                return Fail($"Auth:Keys:{i}:Scopes is empty; give at least one of write, read, admin.");
            }
        }

        return options.Enabled && options.Keys.Count == 0
            ? Fail("Auth:Enabled is true but Auth:Keys is empty; no call could succeed.")
            : ValidateOptionsResult.Success;
    }

    private static ValidateOptionsResult Fail(string message) => ValidateOptionsResult.Fail(message);
}
