using Google.Protobuf;
using Grpc.Core;
using Grpc.Net.Client;
using SummaryService.Contract.V1;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>
/// Sends random, mutated and noise messages as raw bytes to every RPC of the contract, over a real
/// HTTP/2 connection, and checks each outcome: a clear status from the allowed set, InvalidArgument
/// naming the message type for every message that does not decode, and a ledger of what the server
/// acknowledged as accepted.
/// </summary>
internal sealed class GrpcFuzzer(Uri server, FuzzTally tally, AcceptedLedger ledger, long nowMs)
{
    /// <summary>What a malformed or refused call may end with; anything else (Unknown, Internal, Unavailable…) is a defect.</summary>
    private static readonly HashSet<StatusCode> Allowed =
    [
        StatusCode.OK, StatusCode.InvalidArgument, StatusCode.NotFound, StatusCode.ResourceExhausted, StatusCode.FailedPrecondition,
    ];

    private static readonly Marshaller<byte[]> Raw = Marshallers.Create(bytes => bytes, bytes => bytes);

    /// <summary>
    /// Sends at least <paramref name="messages"/> messages in all, with <paramref name="sendersPerRpc"/>
    /// concurrent senders on each RPC, so that a slow RPC (a snapshot waits for the disk) gets fewer
    /// messages rather than holding up the others.
    /// </summary>
    public async Task RunAsync(int messages, int sendersPerRpc, int seed, CancellationToken cancellationToken)
    {
        IReadOnlyList<ContractMethod> methods = ContractSurface.Methods;
        await Task.WhenAll(Enumerable.Range(0, methods.Count * sendersPerRpc).Select(sender => Task.Run(async () =>
        {
            // Each sender is a client of its own, on its own connection: thousands of calls of one
            // client's that end early are no reason for the server to slow another's.
            using GrpcChannel channel = GrpcChannel.ForAddress(server, new GrpcChannelOptions { MaxReceiveMessageSize = 64 << 20 });
            ContractMethod method = methods[sender % methods.Count];
            var random = new Random(seed + sender);
            var forge = new MessageForge(random, nowMs, MessageForge.MetricsFor(method));
            var mutator = new ByteMutator(random);
            while (tally.Messages < messages && !cancellationToken.IsCancellationRequested)
            {
                await SendAsync(channel, method, random, forge, mutator).ConfigureAwait(false);
            }
        }, cancellationToken))).ConfigureAwait(false);
    }

    private async Task SendAsync(GrpcChannel channel, ContractMethod method, Random random, MessageForge forge, ByteMutator mutator)
    {
        if (method.StreamsRequests)
        {
            int count = random.Next(1, 7);
            var payloads = Enumerable.Range(0, count).Select(_ => Payload(method, random, forge, mutator)).ToArray();
            await StreamAsync(channel, method, payloads).ConfigureAwait(false);
            return;
        }

        byte[] payload = Payload(method, random, forge, mutator);
        if (method.StreamsReplies)
        {
            await WatchAsync(channel, method, payload).ConfigureAwait(false);
        }
        else
        {
            await UnaryAsync(channel, method, payload).ConfigureAwait(false);
        }
    }

    // Three in ten messages are well formed, a little over half are mutated, the rest noise.
    private static byte[] Payload(ContractMethod method, Random random, MessageForge forge, ByteMutator mutator)
    {
        byte[] valid = forge.Build(method.Input).ToByteArray();
        return random.Next(20) switch
        {
            < 6 => valid,
            < 17 => mutator.Mutate(valid, forge.Build(method.Input).ToByteArray()),
            _ => mutator.Noise(200),
        };
    }

    private async Task UnaryAsync(GrpcChannel channel, ContractMethod method, byte[] payload)
    {
        var rpc = new Method<byte[], byte[]>(MethodType.Unary, method.Descriptor.Service.FullName, method.Descriptor.Name, Raw, Raw);
        Status status;
        byte[]? reply = null;
        try
        {
            reply = await channel.CreateCallInvoker().AsyncUnaryCall(rpc, null, Options(), payload).ConfigureAwait(false);
            status = Status.DefaultSuccess;
        }
        catch (RpcException ex)
        {
            status = ex.Status;
        }

        Check(method, payload, status);
        if (reply is not null)
        {
            Account(method, payload, reply);
        }
    }

    /// <summary>
    /// A server stream is read to its end. Hanging up instead (a reset per call, thousands of them)
    /// meets Kestrel's rapid-reset protection, which then refuses streams with ENHANCE_YOUR_CALM:
    /// the server defending itself, not an answer about the message. So a request with a
    /// <c>max_updates</c> field gets "max_updates = 1" appended — in protobuf the last value of a field
    /// wins — and a decodable watch ends by itself after one update.
    /// </summary>
    private async Task WatchAsync(GrpcChannel channel, ContractMethod method, byte[] payload)
    {
        var rpc = new Method<byte[], byte[]>(MethodType.ServerStreaming, method.Descriptor.Service.FullName, method.Descriptor.Name, Raw, Raw);
        byte[] sent = method.Input.FindFieldByName("max_updates") is { } maxUpdates ? [.. payload, .. OneMoreField(maxUpdates.FieldNumber, 1)] : payload;
        Status status = Status.DefaultSuccess;
        using var patience = new CancellationTokenSource(TimeSpan.FromSeconds(10));
        try
        {
            using var call = channel.CreateCallInvoker().AsyncServerStreamingCall(rpc, null, Options(), sent);
            while (await call.ResponseStream.MoveNext(patience.Token).ConfigureAwait(false))
            {
            }
        }
        catch (RpcException ex) when (ex.StatusCode == StatusCode.Cancelled && patience.IsCancellationRequested)
        {
            // Rarely the appended bytes complete a message cut short inside an earlier field, so
            // max_updates stays unset: the watch started and runs on, and only then is it hung up.
        }
        catch (RpcException ex)
        {
            status = ex.Status;
        }

        Check(method, sent, status);
    }

    private static byte[] OneMoreField(int number, ulong value)
    {
        using var stream = new MemoryStream();
        var output = new CodedOutputStream(stream);
        output.WriteTag(number, WireFormat.WireType.Varint);
        output.WriteUInt64(value);
        output.Flush();
        return stream.ToArray();
    }

    private async Task StreamAsync(GrpcChannel channel, ContractMethod method, byte[][] payloads)
    {
        var rpc = new Method<byte[], byte[]>(MethodType.DuplexStreaming, method.Descriptor.Service.FullName, method.Descriptor.Name, Raw, Raw);
        var replies = new List<byte[]>();
        Status status = Status.DefaultSuccess;
        try
        {
            using var call = channel.CreateCallInvoker().AsyncDuplexStreamingCall(rpc, null, Options());
            try
            {
                foreach (byte[] payload in payloads)
                {
                    await call.RequestStream.WriteAsync(payload).ConfigureAwait(false);
                }

                await call.RequestStream.CompleteAsync().ConfigureAwait(false);
            }
            catch (Exception ex) when (ex is RpcException or InvalidOperationException)
            {
                // The server ended the call early (a message it could not decode); its status says why.
            }

            while (await call.ResponseStream.MoveNext(CancellationToken.None).ConfigureAwait(false))
            {
                replies.Add(call.ResponseStream.Current);
            }
        }
        catch (RpcException ex)
        {
            status = ex.Status;
        }

        // The stream as a whole is judged by its first undecodable message, if it has one.
        byte[] judged = payloads.FirstOrDefault(p => !Decodes(method, p)) ?? payloads[^1];
        Check(method, judged, status, payloads.Length);
        for (int i = 0; i < replies.Count && i < payloads.Length; i++)
        {
            Account(method, payloads[i], replies[i]);
        }
    }

    private void Check(ContractMethod method, byte[] payload, Status status, int messages = 1)
    {
        tally.Record(method.Path, status.StatusCode.ToString(), messages);
        if (!Allowed.Contains(status.StatusCode))
        {
            tally.Violation($"{method.Path}: {status.StatusCode} \"{status.Detail}\" for {Convert.ToHexString(payload)}");
            return;
        }

        if (!Decodes(method, payload) && (status.StatusCode != StatusCode.InvalidArgument || !status.Detail.Contains(method.Input.Name, StringComparison.Ordinal)))
        {
            tally.Violation($"{method.Path}: undecodable {method.Input.Name} answered {status.StatusCode} \"{status.Detail}\" for {Convert.ToHexString(payload)}");
        }
    }

    // The server decodes with the same library, so a message the fuzzer can decode is the message
    // the server applied when it acknowledged it.
    private void Account(ContractMethod method, byte[] payload, byte[] replyBytes)
    {
        if (method.Descriptor.OutputType.FullName != PushReply.Descriptor.FullName)
        {
            return;
        }

        var reply = PushReply.Parser.ParseFrom(replyBytes);
        if (reply.ErrorCode.Length > 0 || reply.Duplicate)
        {
            return;
        }

        if (method.Input.FullName == Batch.Descriptor.FullName)
        {
            var batch = Batch.Parser.ParseFrom(payload);
            if (reply.Accepted != (ulong)batch.Values.Count)
            {
                tally.Violation($"{method.Path}: acknowledged {reply.Accepted} of {batch.Values.Count} values");
            }

            ledger.Add(batch);
        }
        else if (method.Input.FullName == SketchUpload.Descriptor.FullName)
        {
            ledger.Add(SketchUpload.Parser.ParseFrom(payload));
        }
    }

    private static bool Decodes(ContractMethod method, byte[] payload)
    {
        try
        {
            method.Input.Parser.ParseFrom(payload);
            return true;
        }
        catch (InvalidProtocolBufferException)
        {
            return false;
        }
    }

    private static CallOptions Options() => new(deadline: DateTime.UtcNow.AddSeconds(60));
}
