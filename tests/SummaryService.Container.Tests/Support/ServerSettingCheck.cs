using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.Options;
using SummaryService.Cluster.Hosting;
using SummaryService.Server.Configuration;
using SummaryService.Server.Otlp;

namespace SummaryService.Container.Tests.Support;

/// <summary>
/// The environment a deployment file gives the server, checked the way the server reads it: on top
/// of its own appsettings.json, each of its sections bound to its settings type with unknown keys
/// refused (a misspelt key would otherwise be ignored in silence), then judged by the server's
/// start-up rules (<see cref="SettingsValidator"/>, <see cref="ClusterSettings.Problem"/>), which is
/// where a missing required setting shows.
/// </summary>
internal static class ServerSettingCheck
{
    private static readonly Dictionary<string, Type> Sections = new(StringComparer.OrdinalIgnoreCase)
    {
        [StoreSettings.SectionName] = typeof(StoreSettings),
        [PersistenceSettings.SectionName] = typeof(PersistenceSettings),
        [ServerSettings.SectionName] = typeof(ServerSettings),
        [AuthSettings.SectionName] = typeof(AuthSettings),
        [OtlpSettings.SectionName] = typeof(OtlpSettings),
        [ClusterSettings.SectionName] = typeof(ClusterSettings),
    };

    /// <summary>Variables read by the runtime, ASP.NET Core or the OpenTelemetry SDK rather than by the server's sections.</summary>
    private static readonly string[] PlatformPrefixes = ["OTEL_", "DOTNET_", "ASPNETCORE_", "Logging__"];

    /// <summary>What is wrong with the environment, each naming the variable or setting; empty when the server would start with it.</summary>
    public static IReadOnlyList<string> Problems(IReadOnlyDictionary<string, string> environment)
    {
        var problems = environment.Keys.Select(UnknownKey).OfType<string>().ToList();
        IConfiguration configuration = new ConfigurationBuilder()
            .AddJsonFile(RepositoryFiles.PathOf("src", "SummaryService.Server", "appsettings.json"))
            .AddInMemoryCollection(environment.Select(e => KeyValuePair.Create(e.Key.Replace("__", ":", StringComparison.Ordinal), (string?)e.Value)))
            .Build();
        foreach (var (name, type) in Sections)
        {
            object settings;
            try
            {
                settings = configuration.GetSection(name).Get(type, binder => binder.ErrorOnUnknownConfiguration = true) ?? Activator.CreateInstance(type)!;
            }
            catch (InvalidOperationException ex)
            {
                problems.Add($"{name}: {ex.Message}");
                continue;
            }

            if (Judge(settings) is { Failed: true } result)
            {
                problems.Add(result.FailureMessage);
            }
        }

        return problems;
    }

    private static string? UnknownKey(string key)
    {
        if (PlatformPrefixes.Any(prefix => key.StartsWith(prefix, StringComparison.Ordinal)))
        {
            return null;
        }

        string[] path = key.Split("__");
        if (path[0] == "Kestrel")
        {
            // Kestrel binds its endpoints itself; these are the only Kestrel settings the deployments need.
            return path is ["Kestrel", "Endpoints", _, "Url"] ? null : $"{key} is not a Kestrel endpoint URL (Kestrel__Endpoints__Name__Url).";
        }

        return Sections.Keys.Contains(path[0], StringComparer.Ordinal) && path.Length > 1
            ? null
            : $"{key} is in no section the server reads ({string.Join(", ", Sections.Keys)}).";
    }

    private static ValidateOptionsResult Judge(object settings)
    {
        var validator = new SettingsValidator();
        return settings switch
        {
            StoreSettings store => validator.Validate(null, store),
            PersistenceSettings persistence => validator.Validate(null, persistence),
            ServerSettings server => validator.Validate(null, server),
            AuthSettings auth => validator.Validate(null, auth),
            ClusterSettings cluster => cluster.Problem() is { } problem ? ValidateOptionsResult.Fail(problem) : ValidateOptionsResult.Success,
            _ => ValidateOptionsResult.Success, // Otlp: its two rules sit in OtlpRegistration; binding is what is checked here.
        };
    }
}
