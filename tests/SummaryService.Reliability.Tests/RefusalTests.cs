using System.Net;
using System.Text;
using System.Text.Json;
using Google.Protobuf;
using Grpc.Core;
using Microsoft.Extensions.Logging;
using Microsoft.Extensions.Options;
using Microsoft.Extensions.Time.Testing;
using SummaryService.Contract.V1;
using SummaryService.Reliability.Tests.Support;
using SummaryService.Server.Configuration;
using SummaryService.Server.Diagnostics;
using SummaryService.Server.Validation;

namespace SummaryService.Reliability.Tests;

/// <summary>How one bad request is answered and logged: the cases the fuzz test found, as specifications.</summary>
public sealed class RefusalTests
{
    private static readonly Marshaller<byte[]> Raw = Marshallers.Create(bytes => bytes, bytes => bytes);

    [Fact]
    public async Task A_batch_that_does_not_decode_is_invalid_argument_naming_its_type_and_the_fault()
    {
        await using var server = LoopbackServer.Start();
        var push = new Method<byte[], byte[]>(MethodType.Unary, "summary.v1.Ingest", "Push", Raw, Raw);

        // Field 1 (metric) declared 5 bytes long with 1 byte left: a truncated message.
        var refused = await Assert.ThrowsAsync<RpcException>(() => server.Channel.CreateCallInvoker().AsyncUnaryCall(push, null, default, [0x0A, 0x05, 0x61]).ResponseAsync);

        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.StartsWith("Batch (3 bytes) could not be decoded: ", refused.Status.Detail, StringComparison.Ordinal);
        Assert.Contains("truncated", refused.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_stream_carrying_an_undecodable_batch_ends_invalid_argument_after_answering_the_batches_before_it()
    {
        await using var server = LoopbackServer.Start();
        var stream = new Method<byte[], byte[]>(MethodType.DuplexStreaming, "summary.v1.Ingest", "PushStream", Raw, Raw);
        using var call = server.Channel.CreateCallInvoker().AsyncDuplexStreamingCall(stream, null, default);
        await call.RequestStream.WriteAsync(new Batch { Metric = "shop.stream", Values = { 1, 2 } }.ToByteArray());
        await call.RequestStream.WriteAsync([0xFF, 0xFF, 0xFF]);

        Assert.True(await call.ResponseStream.MoveNext(CancellationToken.None));
        Assert.Equal(2ul, PushReply.Parser.ParseFrom(call.ResponseStream.Current).Accepted);
        var refused = await Assert.ThrowsAsync<RpcException>(() => call.ResponseStream.MoveNext(CancellationToken.None));
        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.StartsWith("Batch (3 bytes) could not be decoded", refused.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_field_name_with_line_breaks_and_non_ascii_comes_back_escaped_in_the_field_trailer()
    {
        // Such a name in the trailer used to fail the call: HTTP/2 refuses control and non-ASCII characters in header values.
        await using var server = LoopbackServer.Start();
        var ingest = new Ingest.IngestClient(server.Channel);

        var refused = await Assert.ThrowsAsync<RpcException>(() => ingest.PushAsync(new Batch { Metric = "shop.labels", Labels = { ["zo\nne🦦"] = "a" }, Values = { 1 } }).ResponseAsync);

        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.Equal(@"labels[zo\u000Ane\uD83E\uDDA6]", refused.Trailers.GetValue(RpcErrors.FieldTrailer));
        Assert.Contains(@"label name 'zo\u000Ane🦦' is invalid", refused.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_megabyte_label_value_is_refused_with_a_message_of_at_most_a_kilobyte()
    {
        await using var server = LoopbackServer.Start();
        var ingest = new Ingest.IngestClient(server.Channel);

        var refused = await Assert.ThrowsAsync<RpcException>(() => ingest.PushAsync(new Batch { Metric = "shop.labels", Labels = { ["zone"] = new string('v', 1 << 20) }, Values = { 1 } }).ResponseAsync);

        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.True(refused.Status.Detail.Length <= WireText.MaxMessageChars, $"{refused.Status.Detail.Length} characters");
        Assert.StartsWith("label 'zone' has value 'vvv", refused.Status.Detail, StringComparison.Ordinal);
        Assert.EndsWith("values are 1 to 200 printable characters.", refused.Status.Detail, StringComparison.Ordinal);
    }

    [Fact]
    public async Task A_timeline_over_most_of_64_bit_time_is_refused_for_its_step_count_not_failed()
    {
        // Found by the fuzzer: the window's length overflowed 64 bits and its text overflowed a duration.
        await using var server = LoopbackServer.Start();
        await new Ingest.IngestClient(server.Channel).PushAsync(new Batch { Metric = "shop.timeline", Values = { 1 } });
        var request = new TimelineRequest
        {
            Selector = new Selector { Metric = "shop.timeline" },
            Window = new Window { Range = new Contract.V1.TimeRange { FromUnixMs = long.MinValue + 1, ToUnixMs = DateTimeOffset.UtcNow.ToUnixTimeMilliseconds() } },
            Step = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromMinutes(13)),
        };

        var refused = await Assert.ThrowsAsync<RpcException>(() => new Query.QueryClient(server.Channel).TimelineAsync(request).ResponseAsync);

        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.Contains(" ms into ", refused.Status.Detail, StringComparison.Ordinal);
        Assert.Equal("step", refused.Trailers.GetValue(RpcErrors.FieldTrailer));
    }

    [Fact]
    public async Task A_duration_whose_seconds_and_nanos_differ_in_sign_is_invalid_argument_not_failed()
    {
        // Found by the fuzzer: such a duration passed the range check and then could not be converted.
        await using var server = LoopbackServer.Start();
        var request = new TimelineRequest
        {
            Selector = new Selector { Metric = "shop.timeline" },
            Window = new Window { Last = Google.Protobuf.WellKnownTypes.Duration.FromTimeSpan(TimeSpan.FromHours(1)) },
            Step = new Google.Protobuf.WellKnownTypes.Duration { Seconds = 846, Nanos = -5 },
        };

        var refused = await Assert.ThrowsAsync<RpcException>(() => new Query.QueryClient(server.Channel).TimelineAsync(request).ResponseAsync);

        Assert.Equal(StatusCode.InvalidArgument, refused.StatusCode);
        Assert.Equal("step (846 s, -5 ns) is not a valid duration: seconds and nanos must lie in range and share one sign.", refused.Status.Detail);
    }

    [Theory]
    [InlineData("""{"metric":"shop.json","values":[1,"x"]}""", """values[1]: "x" is not a number""")]
    [InlineData("""{"metric":"shop.json","values":[1],"timeUnixMs":1.5}""", "timeUnixMs: 1.5 is not a whole number")]
    [InlineData("""{"metric":"shop.json","values":[1],"labels":{"zone":7}}""", """labels["zone"]: 7 is not a string""")]
    [InlineData("""{"metric":"shop.json","values":[1],"lables":{"zone":"a"}}""", """lables: Batch has no field "lables"; its fields are metric, labels, values""")]
    [InlineData("""{"metric":"shop.json","values":[1,2""", "the body is not valid JSON")]
    public async Task A_json_body_that_does_not_fit_its_message_is_refused_naming_the_message_the_path_and_the_value(string body, string expected)
    {
        await using var server = LoopbackServer.Start();
        using HttpClient http = server.CreateHttpClient();

        using var response = await http.PostAsync("/v1/push", new StringContent(body, Encoding.UTF8, "application/json"));

        Assert.Equal(HttpStatusCode.BadRequest, response.StatusCode);
        using var status = JsonDocument.Parse(await response.Content.ReadAsStringAsync());
        Assert.Equal(3, status.RootElement.GetProperty("code").GetInt32()); // gRPC InvalidArgument
        string message = status.RootElement.GetProperty("message").GetString()!;
        Assert.StartsWith("The request body for Batch was refused: ", message, StringComparison.Ordinal);
        Assert.Contains(expected, message, StringComparison.Ordinal);
    }

    [Fact]
    public void A_client_refused_a_thousand_times_within_an_interval_costs_two_log_lines_with_the_count()
    {
        var clock = new FakeTimeProvider();
        var lines = new List<string>();
        var log = new RefusalLog(clock, Options.Create(new ServerSettings { RefusalLogInterval = TimeSpan.FromSeconds(10) }), new ListLogger(lines));

        for (int i = 0; i < 1000; i++)
        {
            log.Refused("10.0.0.7", "POST /summary.v1.Ingest/Push", "InvalidArgument", $"values[{i}] is NaN");
            clock.Advance(TimeSpan.FromMilliseconds(5));
        }

        log.Flush(); // 5 s after the first line: not yet due
        clock.Advance(TimeSpan.FromSeconds(5));
        log.Flush();

        Assert.Equal(2, lines.Count);
        Assert.Equal("1 call from 10.0.0.7 refused (InvalidArgument 1); latest: POST /summary.v1.Ingest/Push InvalidArgument: values[0] is NaN", lines[0]);
        Assert.Equal("999 calls from 10.0.0.7 refused in the last 10s (InvalidArgument 999); latest: POST /summary.v1.Ingest/Push InvalidArgument: values[999] is NaN", lines[1]);
    }

    [Fact]
    public void Refusals_from_more_clients_than_are_tracked_share_one_entry()
    {
        var clock = new FakeTimeProvider();
        var lines = new List<string>();
        var log = new RefusalLog(clock, Options.Create(new ServerSettings()), new ListLogger(lines));

        for (int i = 0; i < RefusalLog.MaxClients + 500; i++)
        {
            log.Refused($"client {i}", "POST /v1/push", "HTTP 400", "");
        }

        Assert.Equal(RefusalLog.MaxClients + 1, lines.Count);
        Assert.StartsWith("1 call from other clients refused", lines[^1], StringComparison.Ordinal);
    }

    private sealed class ListLogger(List<string> lines) : ILogger<RefusalLog>
    {
        public IDisposable? BeginScope<TState>(TState state)
            where TState : notnull => null;

        public bool IsEnabled(LogLevel logLevel) => true;

        public void Log<TState>(LogLevel logLevel, EventId eventId, TState state, Exception? exception, Func<TState, Exception?, string> formatter) => lines.Add(formatter(state, exception));
    }
}
