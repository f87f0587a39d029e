using System.Security.Cryptography;
using System.Text;
using Microsoft.Extensions.Options;
using SummaryService.Server.Configuration;

namespace SummaryService.Server.Auth;

/// <summary>
/// The configured keys by hash. Keys are never stored: a presented key is hashed with SHA-256 and
/// compared in constant time with every configured hash, so neither the file nor timing reveals one.
/// </summary>
public sealed class ApiKeyRegistry
{
    private readonly List<(byte[] Hash, CallerAccess Access)> _keys;

    /// <summary>Reads the keys from the <c>Auth</c> section.</summary>
    public ApiKeyRegistry(IOptions<AuthSettings> options)
    {
        ArgumentNullException.ThrowIfNull(options);
        Enabled = options.Value.Enabled;
        _keys = options.Value.Keys.Select(k => (Convert.FromHexString(k.Sha256), new CallerAccess(k.Name, ParseScopes(k.Scopes), k.Prefixes.ToArray()))).ToList();
    }

    /// <summary>False when every call is allowed.</summary>
    public bool Enabled { get; }

    /// <summary>Hex SHA-256 of a key, the form configuration stores.</summary>
    public static string HashOf(string key) => Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(key)));

    /// <summary>The access of a presented key, or null when no configured hash matches.</summary>
    public CallerAccess? Find(string presented)
    {
        byte[] hash = SHA256.HashData(Encoding.UTF8.GetBytes(presented));
        CallerAccess? found = null;
        foreach (var (candidate, access) in _keys)
        {
            if (CryptographicOperations.FixedTimeEquals(candidate, hash))
            {
                found = access;
            }
        }

        return found;
    }

    private static Scope ParseScopes(IEnumerable<string> names)
    {
        Scope scopes = Scope.None;
        foreach (string name in names)
        {
            if (ScopeNames.TryParse(name, out Scope scope))
            {
                scopes |= scope;
            }
        }

        return scopes;
    }
}
