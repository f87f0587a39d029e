namespace SummaryService.Cli;

/// <summary>
/// The process exit codes, fixed so scripts can branch on them; README's CLI reference lists the same table.
/// </summary>
public static class ExitCodes
{
    /// <summary>The command did what it was asked.</summary>
    public const int Ok = 0;

    /// <summary>The command line or its input is wrong: a parse error here, or InvalidArgument from the server.</summary>
    public const int Usage = 1;

    /// <summary>No server answered at the address (nothing listening, refused, or no answer in time).</summary>
    public const int Unreachable = 2;

    /// <summary>The server refused the key: missing or unknown (Unauthenticated) or lacking a scope or prefix (PermissionDenied).</summary>
    public const int AuthRefused = 3;

    /// <summary>Nothing to show: no series matches the selection, or the window holds no values.</summary>
    public const int NotFound = 4;

    /// <summary>Any other refusal or failure of the server (limits, snapshots switched off, internal errors).</summary>
    public const int ServerError = 5;
}
