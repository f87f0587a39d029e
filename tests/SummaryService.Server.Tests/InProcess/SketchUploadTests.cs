using Grpc.Core;
using MathNet.Numerics.Statistics;
using SummaryService.Contract.V1;
using SummaryService.Server.Tests.Support;
using SummaryService.Sketches;
using SummaryService.Sketches.Serialization;

namespace SummaryService.Server.Tests.InProcess;

public sealed class SketchUploadTests
{
    [Fact]
    public async Task An_uploaded_sketch_merges_with_pushed_values()
    {
        await using var server = new TestServer();
        double[] pushed = Requests.Latencies(200, 31);
        double[] uploaded = Requests.Latencies(150, 32);
        await server.Ingest.PushAsync(Requests.Batch("shop.pre", pushed));
        var sketch = new SeriesSketch();
        sketch.Add(uploaded);
        var reply = await server.Ingest.PushSketchAsync(new Contract.V1.SketchUpload { Metric = "shop.pre", Sketch = SketchCodec.ToState(sketch), Producer = "edge-1", Sequence = 1 });
        Assert.Equal(150ul, reply.Accepted);

        double[] all = [.. pushed, .. uploaded];
        var summary = Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.pre"))).Groups).Summary;
        Assert.Equal(350ul, summary.Count);
        Assert.Equal(all.Mean(), summary.Mean, 1e-9); // MathNet.Numerics
        Assert.Equal(all.Variance(), summary.Variance, 1e-7); // MathNet.Numerics

        var again = await server.Ingest.PushSketchAsync(new Contract.V1.SketchUpload { Metric = "shop.pre", Sketch = SketchCodec.ToState(sketch), Producer = "edge-1", Sequence = 1 });
        Assert.True(again.Duplicate);
        Assert.Equal(350ul, Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.pre"))).Groups).Summary.Count);
    }

    [Fact]
    public async Task Malformed_empty_or_mismatched_sketches_are_refused_and_change_nothing()
    {
        await using var server = new TestServer();
        await server.Ingest.PushAsync(Requests.Batch("shop.pre", [1, 2]));
        var good = new SeriesSketch();
        good.Add([5.0, 6.0]);
        var badVersion = SketchCodec.ToState(good);
        badVersion.Version = 99;
        var coarse = new SeriesSketch(SeriesSketchOptions.Default with { ModeResolution = 0.5 });
        coarse.Add(3.0);

        var cases = new (Contract.V1.SketchUpload Upload, string Mention)[]
        {
            (new() { Metric = "shop.pre" }, "sketch is missing"),
            (new() { Metric = "shop.pre", Sketch = badVersion }, "malformed"),
            (new() { Metric = "shop.pre", Sketch = SketchCodec.ToState(new SeriesSketch()) }, "no values"),
            (new() { Metric = "shop.pre", Sketch = SketchCodec.ToState(coarse) }, "sketch.modes"),
            (new() { Metric = "", Sketch = SketchCodec.ToState(good) }, "metric"),
        };
        foreach (var (upload, mention) in cases)
        {
            var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Ingest.PushSketchAsync(upload));
            Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
            Assert.Contains(mention, ex.Status.Detail, StringComparison.Ordinal);
            Assert.Equal(2ul, Assert.Single((await server.Query.SummarizeAsync(Requests.Summarize("shop.pre"))).Groups).Summary.Count);
        }
    }
}
