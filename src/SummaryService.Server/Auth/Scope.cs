namespace SummaryService.Server.Auth;

/// <summary>What a key may do: each service needs exactly one scope.</summary>
[Flags]
public enum Scope
{
    /// <summary>Nothing.</summary>
    None = 0,

    /// <summary>Ingest: push batches and sketches.</summary>
    Write = 1,

    /// <summary>Query: summaries, timelines, watches, comparisons and the catalogue.</summary>
    Read = 2,

    /// <summary>Admin: removal of series, snapshots, the store's holdings.</summary>
    Admin = 4,
}

/// <summary>Scope names as they appear in configuration.</summary>
public static class ScopeNames
{
    /// <summary>Parses <c>write</c>, <c>read</c> or <c>admin</c> (any case).</summary>
    public static bool TryParse(string text, out Scope scope)
    {
        scope = text.Trim().ToLowerInvariant() switch
        {
            "write" => Scope.Write,
            "read" => Scope.Read,
            "admin" => Scope.Admin,
            _ => Scope.None,
        };
        return scope != Scope.None;
    }
}
