using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;

namespace SummaryService.Server.Otlp;

/// <summary>Registers OTLP metrics in: settings, the cumulative-stream memory, the receiver, the gRPC service and the HTTP route.</summary>
public static class OtlpRegistration
{
    /// <summary>Services for OTLP in.</summary>
    public static IServiceCollection AddOtlpMetrics(this IServiceCollection services, IConfiguration configuration)
    {
        services.AddOptions<OtlpSettings>().Bind(configuration.GetSection(OtlpSettings.SectionName))
            .Validate(s => s.MaxCumulativeStreams > 0, $"{OtlpSettings.SectionName}:MaxCumulativeStreams must be positive.")
            .Validate(s => s.EffectiveResourceLabels.All(k => k.Length > 0), $"{OtlpSettings.SectionName}:ResourceLabels must not hold an empty name.")
            .ValidateOnStart();
        services.AddSingleton(provider =>
        {
            var time = provider.GetRequiredService<TimeProvider>();
            ulong listeningSince = (ulong)time.GetUtcNow().ToUnixTimeMilliseconds() * 1_000_000UL;
            return new CumulativeStreams(listeningSince, provider.GetRequiredService<IOptions<OtlpSettings>>().Value.MaxCumulativeStreams);
        });
        services.AddSingleton(provider => new MetricsTranslator(
            provider.GetRequiredService<IOptions<OtlpSettings>>().Value,
            provider.GetRequiredService<IOptions<StoreSettings>>().Value.ToStoreOptions().Sketch,
            provider.GetRequiredService<CumulativeStreams>()));
        services.AddSingleton<OtlpReceiver>();
        return services;
    }

    /// <summary>The gRPC service and the HTTP route.</summary>
    public static WebApplication MapOtlpMetrics(this WebApplication app)
    {
        ArgumentNullException.ThrowIfNull(app);

        // Made now, before the server listens: its clock reading decides which streams began while it listened.
        app.Services.GetRequiredService<CumulativeStreams>();
        app.MapGrpcService<OtlpMetricsService>();
        app.MapOtlpHttp();
        return app;
    }
}
