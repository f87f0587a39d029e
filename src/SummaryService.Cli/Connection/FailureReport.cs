using System.Net.Sockets;
using Grpc.Core;
using SummaryService.Cli.Commands;
using SummaryService.Readable;

namespace SummaryService.Cli.Connection;

/// <summary>
/// Turns a failed call into one line a person can act on and the exit code a script can test. The
/// server's message names the field and the value; the field is shown as the command's own option.
/// </summary>
public static class FailureReport
{
    /// <summary>The trailer in which the server names the request field at fault.</summary>
    public const string FieldTrailer = "summary-field";

    /// <summary>The exit code and the line for a failed call to <paramref name="server"/>.</summary>
    public static (int ExitCode, string Line) Of(RpcException failure, Uri server, FieldNames fields)
    {
        ArgumentNullException.ThrowIfNull(failure);
        ArgumentNullException.ThrowIfNull(server);
        ArgumentNullException.ThrowIfNull(fields);
        string detail = fields.Translate(failure.Status.Detail, failure.Trailers.GetValue(FieldTrailer));
        return failure.StatusCode switch
        {
            StatusCode.Unavailable => (ExitCodes.Unreachable, $"error: cannot reach the server at {server} ({Cause(failure)}). {WhatToCheck}"),
            StatusCode.DeadlineExceeded => (ExitCodes.Unreachable, $"error: the server at {server} did not answer within {DurationText.Format(ServerConnection.UnaryDeadline)}. {WhatToCheck}"),
            StatusCode.Unauthenticated => (ExitCodes.AuthRefused, $"error: the server refused the API key: {detail} Pass a valid key with --api-key or {CommonOptions.ApiKeyVariable}."),
            StatusCode.PermissionDenied => (ExitCodes.AuthRefused, $"error: the key may not do this: {detail}"),
            StatusCode.NotFound => (ExitCodes.NotFound, $"error: {detail} List what exists with '{CliApp.Name} catalogue'."),
            StatusCode.InvalidArgument => (ExitCodes.Usage, $"error: the server refused the request: {detail}"),
            // A cancellation the caller asked for never reaches here (CommandRunner ends those with 0): this one came from the server.
            StatusCode.Cancelled => (ExitCodes.ServerError, $"error: the server ended the call: {detail}"),
            _ => (ExitCodes.ServerError, $"error: the server answered {failure.StatusCode}: {detail}"),
        };
    }

    /// <summary>What to look at when no server answers: the address, where it came from, and the server's own health.</summary>
    private static string WhatToCheck =>
        $"Check the address (--server, else {CommonOptions.ServerVariable}, else {CommonOptions.DefaultServer}), that a SummaryService is running there, and that its gRPC health service (grpc.health.v1.Health/Check) reports it serving.";

    private static string Cause(RpcException failure)
    {
        for (Exception? e = failure.Status.DebugException; e is not null; e = e.InnerException)
        {
            if (e is SocketException socket)
            {
                return socket.SocketErrorCode == SocketError.ConnectionRefused ? "connection refused: nothing is listening there" : socket.Message;
            }
        }

        return failure.Status.Detail.Length > 0 ? failure.Status.Detail : "no answer";
    }
}
