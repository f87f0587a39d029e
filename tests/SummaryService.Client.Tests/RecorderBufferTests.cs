using SummaryService.Client.Recording;
using SummaryService.Client.Tests.Support;
using SummaryService.TestSupport;

namespace SummaryService.Client.Tests;

/// <summary>The buffer's bound while the server is unreachable, under each full-buffer policy.</summary>
[Collection(nameof(ServerCollection))]
public sealed class RecorderBufferTests
{
    private const int Capacity = 64;

    [Fact]
    public async Task A_full_buffer_drops_and_counts_and_delivers_what_it_kept()
    {
        int port = ServerProcess.FreePort();
        using var unreachable = new SummaryClient(new SummaryClientOptions { Address = new Uri($"http://127.0.0.1:{port}") });
        var options = Measurements.Quick with { BufferCapacity = Capacity, MaxBatchValues = 16, WhenFull = FullBufferPolicy.DropAndCount };
        await using var recorder = new MeasurementRecorder(unreachable, options);

        for (int i = 0; i < 100; i++)
        {
            recorder.Record("tallowbrook.queue.depth", i);
        }

        Assert.Equal(100 - Capacity, recorder.Statistics.ValuesDropped);
        Assert.Equal(Capacity, recorder.Statistics.ValuesHeld);

        await using LiveServer server = await LiveServer.StartAsync(port: port);
        await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
        Assert.Equal((ulong)Capacity, (await server.Client.SummaryOfAsync("tallowbrook.queue.depth")).Count);

        // The kept values are the first 64 recorded: 0..63, so the exact maximum is 63.
        Assert.Equal(Capacity - 1, (await server.Client.SummaryOfAsync("tallowbrook.queue.depth")).Max);
    }

    [Fact]
    public async Task A_full_buffer_blocks_the_recording_thread_until_the_server_takes_values()
    {
        int port = ServerProcess.FreePort();
        using var unreachable = new SummaryClient(new SummaryClientOptions { Address = new Uri($"http://127.0.0.1:{port}") });
        var options = Measurements.Quick with { BufferCapacity = Capacity, MaxBatchValues = 16, WhenFull = FullBufferPolicy.Block };
        await using var recorder = new MeasurementRecorder(unreachable, options);
        for (int i = 0; i < Capacity; i++)
        {
            recorder.Record("tallowbrook.queue.depth", i);
        }

        Task blocked = Task.Factory.StartNew(() => recorder.Record("tallowbrook.queue.depth", Capacity), CancellationToken.None, TaskCreationOptions.LongRunning, TaskScheduler.Default);
        // Once the call waits for room it cannot finish: nothing can free room while the server is down.
        await Condition.WaitUntilAsync(() => recorder.CallersWaitingForRoom == 1, TimeSpan.FromSeconds(20));
        Assert.False(blocked.IsCompleted);

        await using LiveServer server = await LiveServer.StartAsync(port: port);
        await blocked.WaitAsync(TimeSpan.FromSeconds(20));
        await recorder.FlushAsync().WaitAsync(TimeSpan.FromSeconds(20));
        Assert.Equal(0, recorder.Statistics.ValuesDropped);
        Assert.Equal((ulong)Capacity + 1, (await server.Client.SummaryOfAsync("tallowbrook.queue.depth")).Count);
    }

    [Fact]
    public async Task A_blocked_recording_gives_up_after_its_timeout_and_counts_the_value()
    {
        int port = ServerProcess.FreePort();
        using var unreachable = new SummaryClient(new SummaryClientOptions { Address = new Uri($"http://127.0.0.1:{port}") });
        var options = Measurements.Quick with { BufferCapacity = Capacity, MaxBatchValues = 16, WhenFull = FullBufferPolicy.Block, BlockTimeout = TimeSpan.FromMilliseconds(200), DisposeTimeout = TimeSpan.FromMilliseconds(300) };
        await using var recorder = new MeasurementRecorder(unreachable, options);
        for (int i = 0; i <= Capacity; i++)
        {
            recorder.Record("tallowbrook.queue.depth", i);
        }

        Assert.Equal(1, recorder.Statistics.ValuesDropped);
        await recorder.DisposeAsync();
        Assert.Equal(Capacity, recorder.Statistics.ValuesAbandoned);
        Assert.Equal(0, recorder.Statistics.ValuesHeld);
    }
}
