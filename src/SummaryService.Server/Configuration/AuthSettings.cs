namespace SummaryService.Server.Configuration;

/// <summary>The <c>Auth</c> section: API keys, kept only as SHA-256 hashes.</summary>
public sealed class AuthSettings
{
    /// <summary>Configuration section name.</summary>
    public const string SectionName = "Auth";

    /// <summary>When false every call is allowed and a warning is logged at start-up.</summary>
    public bool Enabled { get; set; }

    /// <summary>The keys the server accepts.</summary>
    public List<ApiKeySettings> Keys { get; set; } = [];
}

/// <summary>One API key.</summary>
public sealed class ApiKeySettings
{
    /// <summary>A name for logs and traces; never the key itself.</summary>
    public string Name { get; set; } = "";

    /// <summary>SHA-256 of the key's UTF-8 bytes, 64 hexadecimal digits.</summary>
    public string Sha256 { get; set; } = "";

    /// <summary>Any of <c>write</c>, <c>read</c>, <c>admin</c>.</summary>
    public List<string> Scopes { get; set; } = [];

    /// <summary>Metric-name prefixes the key may touch; empty means every metric.</summary>
    public List<string> Prefixes { get; set; } = [];
}
