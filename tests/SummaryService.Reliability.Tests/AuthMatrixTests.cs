using System.Net;
using System.Net.Http.Headers;
using Google.Protobuf;
using Grpc.Core;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Fuzzing;
using SummaryService.Reliability.Tests.Support;
using SummaryService.Server.Auth;
using Xunit.Abstractions;

namespace SummaryService.Reliability.Tests;

/// <summary>
/// Every RPC and JSON route (from the descriptors) × no key, an unknown key, each scope, a metric
/// inside and outside the key's prefixes: the documented status every time, and a refusal changes nothing.
/// </summary>
/// <remarks>
/// The documented rules: no key or an unknown one is Unauthenticated (HTTP 401); a key without the
/// scope the RPC needs is PermissionDenied (403) — Ingest needs write, Query read, listing the
/// catalogue read, the other Admin calls admin; a key limited to prefixes is PermissionDenied for a
/// metric outside them and for store-wide operations. Anything else gets past access control.
/// </remarks>
public sealed class AuthMatrixTests(ITestOutputHelper output)
{
    private static readonly Marshaller<byte[]> Raw = Marshallers.Create(bytes => bytes, bytes => bytes);

    private static readonly Caller[] Callers =
    [
        new("no key", null, Scope.None, []),
        new("unknown key", "not-a-configured-key", Scope.None, []),
        new("writer of team-a", "k-write-a", Scope.Write, ["team-a."]),
        new("reader of team-a", "k-read-a", Scope.Read, ["team-a."]),
        new("admin of team-a", "k-admin-a", Scope.Admin, ["team-a."]),
        new("writer of all", "k-write", Scope.Write, []),
        new("reader of all", "k-read", Scope.Read, []),
        new("admin of all", "k-admin", Scope.Admin | Scope.Read, []),
    ];

    private static readonly string[] Metrics = ["team-a.latency", "team-b.latency"];

    [Fact]
    public async Task Every_rpc_and_route_gives_the_documented_status_to_every_caller_and_a_refusal_changes_nothing()
    {
        await using var server = LoopbackServer.Start(Settings());
        await SeedAsync(server);
        using HttpClient http = server.CreateHttpClient();
        int checkedCalls = 0;

        foreach (ContractMethod method in ContractSurface.Methods)
        {
            Scope needed = ApiKeyInterceptor.ScopeOf(method.Path);
            Assert.True(needed != Scope.None, $"{method.Path} needs no scope: every RPC of the contract must be guarded");
            foreach (string metric in Metrics)
            {
                var (request, namesMetric) = ValidRequests.For(method.Input, metric);
                foreach (Caller caller in Callers)
                {
                    StatusCode? expected = Expected(caller, needed, metric, namesMetric);
                    string before = await FingerprintAsync(server);
                    StatusCode actual = await CallAsync(server, method, request, caller);
                    Assert.True(expected is null ? actual is not (StatusCode.Unauthenticated or StatusCode.PermissionDenied) : actual == expected, $"{method.Path} for {metric} by {caller.Name}: {actual}, expected {expected?.ToString() ?? "past access control"}");
                    if (expected is not null)
                    {
                        Assert.Equal(before, await FingerprintAsync(server));
                    }

                    if (method.Route is { } route)
                    {
                        HttpStatusCode status = route.Body == "*" ? await PostJsonAsync(http, route.Post, request, caller) : await GetAsync(http, $"{route.Get}{(namesMetric ? $"?metric={metric}" : "")}", caller);
                        HttpStatusCode? expectedHttp = expected switch { StatusCode.Unauthenticated => HttpStatusCode.Unauthorized, StatusCode.PermissionDenied => HttpStatusCode.Forbidden, _ => null };
                        Assert.True(expectedHttp is null ? status is not (HttpStatusCode.Unauthorized or HttpStatusCode.Forbidden) : status == expectedHttp, $"{route.Post}{route.Get} for {metric} by {caller.Name}: {(int)status}, expected {expectedHttp?.ToString() ?? "past access control"}");
                        if (expected is not null)
                        {
                            Assert.Equal(before, await FingerprintAsync(server));
                        }
                    }

                    checkedCalls++;
                }
            }
        }

        output.WriteLine($"{checkedCalls} RPC × caller × metric cases, each also over its JSON route");
    }

    private static StatusCode? Expected(Caller caller, Scope needed, string metric, bool namesMetric)
    {
        if (caller.Key is null || caller.Scopes == Scope.None)
        {
            return StatusCode.Unauthenticated;
        }

        if ((caller.Scopes & needed) == 0)
        {
            return StatusCode.PermissionDenied;
        }

        bool limited = caller.Prefixes.Length > 0;
        return limited && (!namesMetric || !caller.Prefixes.Any(p => metric.StartsWith(p, StringComparison.Ordinal))) ? StatusCode.PermissionDenied : null;
    }

    private static async Task<StatusCode> CallAsync(LoopbackServer server, ContractMethod method, IMessage request, Caller caller)
    {
        var invoker = server.Channel.CreateCallInvoker();
        var options = new CallOptions(headers: caller.Headers(), deadline: DateTime.UtcNow.AddSeconds(30));
        string service = method.Descriptor.Service.FullName;
        try
        {
            if (method.StreamsRequests)
            {
                using var call = invoker.AsyncDuplexStreamingCall(new Method<byte[], byte[]>(MethodType.DuplexStreaming, service, method.Descriptor.Name, Raw, Raw), null, options);
                try
                {
                    await call.RequestStream.WriteAsync(request.ToByteArray());
                    await call.RequestStream.CompleteAsync();
                }
                catch (Exception ex) when (ex is RpcException or InvalidOperationException)
                {
                    // Refused as a whole before the batch was written: the reply stream carries the status.
                }

                while (await call.ResponseStream.MoveNext(CancellationToken.None))
                {
                    // A stream refuses a batch outside the key's prefixes with an error reply and goes on.
                    var reply = PushReply.Parser.ParseFrom(call.ResponseStream.Current);
                    if (reply.ErrorCode.Length > 0)
                    {
                        return Enum.Parse<StatusCode>(reply.ErrorCode);
                    }
                }

                return StatusCode.OK;
            }

            if (method.StreamsReplies)
            {
                using var call = invoker.AsyncServerStreamingCall(new Method<byte[], byte[]>(MethodType.ServerStreaming, service, method.Descriptor.Name, Raw, Raw), null, options, request.ToByteArray());
                await call.ResponseStream.MoveNext(CancellationToken.None);
                return StatusCode.OK;
            }

            await invoker.AsyncUnaryCall(new Method<byte[], byte[]>(MethodType.Unary, service, method.Descriptor.Name, Raw, Raw), null, options, request.ToByteArray());
            return StatusCode.OK;
        }
        catch (RpcException ex)
        {
            return ex.StatusCode;
        }
    }

    private static async Task<HttpStatusCode> PostJsonAsync(HttpClient http, string path, IMessage request, Caller caller)
    {
        using var message = new HttpRequestMessage(HttpMethod.Post, path) { Content = new StringContent(JsonFormatter.Default.Format(request), System.Text.Encoding.UTF8, "application/json") };
        if (caller.Key is not null)
        {
            message.Headers.Authorization = new AuthenticationHeaderValue("Bearer", caller.Key);
        }

        // Headers are enough: a watch that started keeps streaming, and hanging up ends it.
        using HttpResponseMessage response = await http.SendAsync(message, HttpCompletionOption.ResponseHeadersRead);
        return response.StatusCode;
    }

    private static async Task<HttpStatusCode> GetAsync(HttpClient http, string path, Caller caller)
    {
        using var message = new HttpRequestMessage(HttpMethod.Get, path);
        if (caller.Key is not null)
        {
            message.Headers.Authorization = new AuthenticationHeaderValue("Bearer", caller.Key);
        }

        using HttpResponseMessage response = await http.SendAsync(message);
        return response.StatusCode;
    }

    // What a refusal must not change: every series with its count, and the snapshot generations on disk
    // (listed with the admin of all, which also reads).
    private static async Task<string> FingerprintAsync(LoopbackServer server)
    {
        var catalogue = await new Query.QueryClient(server.Channel).CatalogueAsync(new CatalogueRequest(), Callers[^1].Headers());
        int generations = Directory.EnumerateDirectories(Path.Combine(server.DataDirectory, "snapshots")).Count();
        return string.Join("; ", catalogue.Series.Select(s => $"{s.Metric}{s.Labels}={s.Count}")) + $" | {generations} generations";
    }

    private static async Task SeedAsync(LoopbackServer server)
    {
        var ingest = new Ingest.IngestClient(server.Channel);
        foreach (string metric in Metrics)
        {
            await ingest.PushAsync(new Batch { Metric = metric, Values = { 1, 2, 3 } }, Callers[5].Headers());
        }
    }

    private static Dictionary<string, string?> Settings()
    {
        var settings = new Dictionary<string, string?> { ["Auth:Enabled"] = "true" };
        int i = 0;
        foreach (Caller caller in Callers.Where(c => c.Scopes != Scope.None))
        {
            settings[$"Auth:Keys:{i}:Name"] = caller.Name;
            settings[$"Auth:Keys:{i}:Sha256"] = ApiKeyRegistry.HashOf(caller.Key!);
            var scopes = Enum.GetValues<Scope>().Where(s => s != Scope.None && caller.Scopes.HasFlag(s)).ToArray();
            for (int s = 0; s < scopes.Length; s++)
            {
                settings[$"Auth:Keys:{i}:Scopes:{s}"] = scopes[s].ToString().ToLowerInvariant();
            }

            for (int p = 0; p < caller.Prefixes.Length; p++)
            {
                settings[$"Auth:Keys:{i}:Prefixes:{p}"] = caller.Prefixes[p];
            }

            i++;
        }

        return settings;
    }

    private sealed record Caller(string Name, string? Key, Scope Scopes, string[] Prefixes)
    {
        public Metadata Headers() => Key is null ? [] : new Metadata { { "authorization", $"Bearer {Key}" } };
    }
}
