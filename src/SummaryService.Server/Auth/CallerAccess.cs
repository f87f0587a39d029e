using Grpc.Core;

namespace SummaryService.Server.Auth;

/// <summary>
/// What the authenticated caller may touch: its scopes and metric-name prefixes. Services ask it
/// before they read or write, so a refusal happens before anything changes.
/// </summary>
public sealed class CallerAccess
{
    private const string UserStateKey = "summary.caller";

    private readonly IReadOnlyList<string> _prefixes;

    /// <summary>Creates the access of one key.</summary>
    public CallerAccess(string name, Scope scopes, IReadOnlyList<string> prefixes)
    {
        Name = name;
        Scopes = scopes;
        _prefixes = prefixes;
    }

    /// <summary>Access when authentication is off: everything.</summary>
    public static CallerAccess Unrestricted { get; } = new("anonymous", Scope.Write | Scope.Read | Scope.Admin, []);

    /// <summary>Name of the key, for logs.</summary>
    public string Name { get; }

    /// <summary>Scopes the key holds.</summary>
    public Scope Scopes { get; }

    /// <summary>The caller of this call, as the interceptor recorded it.</summary>
    public static CallerAccess Of(ServerCallContext context) =>
        context.UserState.TryGetValue(UserStateKey, out object? value) && value is CallerAccess access ? access : Unrestricted;

    /// <summary>The caller the interceptor recorded in a request's items (a call's user state), or null when none was.</summary>
    public static CallerAccess? Attached(IDictionary<object, object?> items) =>
        items is not null && items.TryGetValue(UserStateKey, out object? value) ? value as CallerAccess : null;

    /// <summary>Records the caller of this call.</summary>
    public void AttachTo(ServerCallContext context) => context.UserState[UserStateKey] = this;

    /// <summary>True when the key may touch this metric.</summary>
    public bool Covers(string metric) => _prefixes.Count == 0 || _prefixes.Any(p => metric.StartsWith(p, StringComparison.Ordinal));

    /// <summary>Throws PermissionDenied unless the key holds the scope and is limited to no prefixes (store-wide operations).</summary>
    public void RequireAllMetrics(Scope scope, string operation)
    {
        Require(scope, "", operation);
        if (_prefixes.Count != 0)
        {
            throw new RpcException(new Status(StatusCode.PermissionDenied, $"{operation} concerns every metric; key '{Name}' is limited to the prefixes {string.Join(", ", _prefixes)}."));
        }
    }

    /// <summary>Throws PermissionDenied unless the key holds the scope and covers the metric.</summary>
    public void Require(Scope scope, string metric, string field)
    {
        if ((Scopes & scope) == 0)
        {
            throw new RpcException(new Status(StatusCode.PermissionDenied, $"key '{Name}' lacks the {scope.ToString().ToLowerInvariant()} scope."));
        }

        if (metric.Length > 0 && !Covers(metric))
        {
            throw new RpcException(new Status(StatusCode.PermissionDenied, $"{field} '{metric}' is outside the metric prefixes of key '{Name}' ({string.Join(", ", _prefixes)})."));
        }
    }
}
