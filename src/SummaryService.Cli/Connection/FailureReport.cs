using System.Net.Sockets;
using Grpc.Core;

namespace SummaryService.Cli.Connection;

/// <summary>
/// Turns a failed call into one line a person can act on and the exit code a script can test.
/// The server's own message already names the field and value, so it is passed on as it is.
/// </summary>
public static class FailureReport
{
    /// <summary>The exit code and the line for a failed call to <paramref name="server"/>.</summary>
    public static (int ExitCode, string Line) Of(RpcException failure, Uri server)
    {
        ArgumentNullException.ThrowIfNull(failure);
        ArgumentNullException.ThrowIfNull(server);
        string detail = failure.Status.Detail;
        return failure.StatusCode switch
        {
            StatusCode.Unavailable => (ExitCodes.Unreachable, $"error: cannot reach the server at {server} ({Cause(failure)}); start it (dotnet run --project src/SummaryService.Server) or point --server / SUMMARY_SERVER at it."),
            StatusCode.DeadlineExceeded => (ExitCodes.Unreachable, $"error: the server at {server} did not answer in time; check that it is running and not overloaded."),
            StatusCode.Unauthenticated => (ExitCodes.AuthRefused, $"error: the server refused the API key: {detail} Pass a valid key with --api-key or SUMMARY_API_KEY."),
            StatusCode.PermissionDenied => (ExitCodes.AuthRefused, $"error: the key may not do this: {detail}"),
            StatusCode.NotFound => (ExitCodes.NotFound, $"error: {detail} List what exists with 'sumq catalog'."),
            StatusCode.InvalidArgument => (ExitCodes.Usage, $"error: the server refused the request: {detail}"),
            // A cancellation the caller asked for never reaches here (CommandRunner ends those with 0): this one came from the server.
            StatusCode.Cancelled => (ExitCodes.ServerError, $"error: the server ended the call: {detail}"),
            _ => (ExitCodes.ServerError, $"error: the server answered {failure.StatusCode}: {detail}"),
        };
    }

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
