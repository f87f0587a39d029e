using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;
using SummaryService.Server.Hosting;

namespace SummaryService.Server.Diagnostics;

/// <summary>Writes the refusal counts that waited out their interval, so a client that stops sending still gets its last summary line.</summary>
public sealed class RefusalLogFlush(RefusalLog refusals, IOptions<ServerSettings> settings, TimeProvider time, ILogger<RefusalLogFlush> logger)
    : PeriodicWork(time, logger)
{
    /// <inheritdoc/>
    protected override TimeSpan Interval => settings.Value.RefusalLogInterval;

    /// <inheritdoc/>
    protected override string WorkName => "Refusal log summary";

    /// <inheritdoc/>
    protected override Task RunOnceAsync(CancellationToken cancellationToken)
    {
        refusals.Flush();
        return Task.CompletedTask;
    }
}
