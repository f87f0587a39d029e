using Microsoft.Extensions.DependencyInjection.Extensions;
using Microsoft.Extensions.Options;
using OpenTelemetry;
using OpenTelemetry.Metrics;
using OpenTelemetry.Resources;
using OpenTelemetry.Trace;
using SummaryService.Server.Auth;
using SummaryService.Server.Configuration;
using SummaryService.Server.Diagnostics;
using SummaryService.Server.Otlp;
using SummaryService.Server.Services;
using SummaryService.Server.Telemetry;
using SummaryService.Server.Validation;
using SummaryService.Store;
using SummaryService.Store.Persistence;

namespace SummaryService.Server.Hosting;

/// <summary>Everything the host needs, in one place, so Program stays a few lines.</summary>
public static class ServiceRegistration
{
    /// <summary>Settings, store, background work, gRPC (and its JSON routes) with its interceptors, health, reflection and telemetry.</summary>
    public static WebApplicationBuilder AddSummaryService(this WebApplicationBuilder builder)
    {
        ArgumentNullException.ThrowIfNull(builder);
        IServiceCollection services = builder.Services;
        services.AddSingleton<SettingsValidator>();
        Bind<StoreSettings>(services, builder.Configuration, StoreSettings.SectionName);
        Bind<PersistenceSettings>(services, builder.Configuration, PersistenceSettings.SectionName);
        Bind<ServerSettings>(services, builder.Configuration, ServerSettings.SectionName);
        Bind<AuthSettings>(services, builder.Configuration, AuthSettings.SectionName);

        services.AddSingleton(TimeProvider.System);
        services.AddSingleton<ServerMetrics>();
        services.TryAddSingleton<IDataFiles, LocalDataFiles>();
        services.TryAddSingleton<IProducerLedger, ProducerSequences>();
        builder.AddStore();
        services.AddSingleton<ApiKeyRegistry>();
        services.AddSingleton<RefusalLog>();
        services.AddSingleton<IngestBudget>();
        services.AddHostedService<RefusalLogFlush>();
        services.AddHostedService<StartupNotices>();
        services.AddOtlpMetrics(builder.Configuration);

        int maxMessage = builder.Configuration.GetSection(ServerSettings.SectionName).Get<ServerSettings>()?.MaxMessageBytes ?? new ServerSettings().MaxMessageBytes;
        services.AddGrpc(options =>
        {
            options.MaxReceiveMessageSize = maxMessage;
            options.MaxSendMessageSize = maxMessage;
            // Outermost first: every status, the key check's included, leaves through the error mapping.
            options.Interceptors.Add<ErrorMappingInterceptor>();
            options.Interceptors.Add<ApiKeyInterceptor>();
            options.Interceptors.Add<QueryTimingInterceptor>();
        }).AddJsonTranscoding(); // the google.api.http routes of the contract: JSON over HTTP/1.1 through the same interceptors
        services.AddGrpcReflection();
        services.AddGrpcHealthChecks().AddCheck<StoreHealthCheck>("store");

        var telemetry = services.AddOpenTelemetry()
            .ConfigureResource(resource => resource.AddService("summary-service"))
            .WithTracing(tracing => tracing.AddAspNetCoreInstrumentation().AddSource(ServerMetrics.ActivitySourceName))
            .WithMetrics(metrics => metrics.AddAspNetCoreInstrumentation().AddMeter(ServerMetrics.MeterName));
        if (!string.IsNullOrWhiteSpace(builder.Configuration["OTEL_EXPORTER_OTLP_ENDPOINT"]))
        {
            telemetry.UseOtlpExporter();
        }

        return builder;
    }

    /// <summary>The gRPC services (with their JSON routes), health, reflection and the built-in page.</summary>
    public static WebApplication MapSummaryService(this WebApplication app)
    {
        ArgumentNullException.ThrowIfNull(app);
        app.UseMiddleware<CallOutcomeLogging>();
        app.UseMiddleware<JsonRequestChecking>();
        app.MapGrpcService<IngestService>();
        app.MapGrpcService<QueryService>();
        app.MapGrpcService<AdminService>();
        app.MapOtlpMetrics();
        app.MapGrpcHealthChecksService();
        app.MapGrpcReflectionService();
        app.MapSummaryPage();
        return app;
    }

    private static void Bind<T>(IServiceCollection services, IConfiguration configuration, string section)
        where T : class
    {
        services.AddOptions<T>().Bind(configuration.GetSection(section)).ValidateOnStart();
        services.AddSingleton<IValidateOptions<T>>(provider => (IValidateOptions<T>)(object)provider.GetRequiredService<SettingsValidator>());
    }
}
