using System.Text.Json;

namespace SummaryService.Container.Tests.Support;

/// <summary>The server's own embedded defaults, read from its appsettings.json: what every deployment file must agree with.</summary>
internal static class ServerDefaults
{
    private static readonly JsonElement Settings = JsonDocument.Parse(File.ReadAllText(RepositoryFiles.PathOf("src", "SummaryService.Server", "appsettings.json"))).RootElement;

    /// <summary>Port of the gRPC endpoint (Kestrel:Endpoints:Grpc:Url).</summary>
    public static int GrpcPort => new Uri(Setting("Kestrel", "Endpoints", "Grpc", "Url")).Port;

    /// <summary>Port of the HTTP/1.1 endpoint for JSON and the page (Kestrel:Endpoints:Http:Url).</summary>
    public static int HttpPort => new Uri(Setting("Kestrel", "Endpoints", "Http", "Url")).Port;

    /// <summary>Store:MemoryBudgetBytes.</summary>
    public static long MemoryBudgetBytes => Element("Store", "MemoryBudgetBytes").GetInt64();

    private static string Setting(params string[] path) => Element(path).GetString() ?? throw new InvalidDataException(string.Join(':', path));

    private static JsonElement Element(params string[] path) => path.Aggregate(Settings, (element, key) => element.GetProperty(key));
}
