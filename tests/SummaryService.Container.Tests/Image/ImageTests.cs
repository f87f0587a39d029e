using System.Globalization;
using System.Net;
using Grpc.Health.V1;
using SummaryService.Container.Tests.Support;
using SummaryService.Contract.V1;

namespace SummaryService.Container.Tests.Image;

/// <summary>The image as an operator runs it: a non-root server on a volume, answering over loopback.</summary>
[Collection(nameof(ServerImage))]
public sealed class ImageTests(ServerImage image)
{
    private static readonly TimeSpan HealthWait = TimeSpan.FromSeconds(60);

    [DockerFact]
    public async Task The_image_declares_a_numeric_non_root_user_its_data_directory_as_a_volume_both_ports_and_a_probe_health_check()
    {
        ImageSettings settings = await ImageSettings.ReadAsync(image);

        Assert.True(UserId(settings.User) > 0, $"user '{settings.User}' must be numeric and not root");
        Assert.Contains(settings.DataDirectory, settings.Volumes);
        Assert.Equal([$"{ServerDefaults.GrpcPort}/tcp", $"{ServerDefaults.HttpPort}/tcp"], settings.ExposedPorts.Order(StringComparer.Ordinal));
        Assert.Equal(["CMD", "/app/SummaryService.Server", "--probe"], settings.HealthCheck);
    }

    [DockerFact]
    public async Task Values_pushed_over_loopback_are_summarized_and_health_page_and_data_files_are_in_order()
    {
        await using var volume = await ServerContainer.CreateVolumeAsync();
        await using var server = await ServerContainer.StartAsync(image, volume);
        var batches = new NumberedBatches("depot.image.weight", "image-test", valuesPerBatch: 40);

        // Push (unary) and PushStream (bidirectional), then one summary of both.
        Assert.Equal(40UL, (await server.Ingest.PushAsync(batches.Batch(1))).Accepted);
        using (var stream = server.Ingest.PushStream())
        {
            await stream.RequestStream.WriteAsync(batches.Batch(2));
            await stream.RequestStream.WriteAsync(batches.Batch(3));
            await stream.RequestStream.CompleteAsync();
            var replies = new List<PushReply>();
            while (await stream.ResponseStream.MoveNext(CancellationToken.None))
            {
                replies.Add(stream.ResponseStream.Current);
            }

            Assert.Equal([2UL, 3UL], replies.Select(r => r.Sequence));
            Assert.All(replies, r => Assert.Equal(40UL, r.Accepted));
        }

        Summary summary = Assert.Single((await server.Query.SummarizeAsync(batches.LastHour())).Groups).Summary;
        var (count, sum) = batches.Expected(3);
        Assert.Equal(count, summary.Count);
        Assert.Equal(sum, summary.Sum);

        // The standard health service from outside, and the image's own health check inside.
        var health = await new Health.HealthClient(server.Channel).CheckAsync(new HealthCheckRequest());
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, health.Status);
        Assert.Equal("healthy", await HealthStatusAsync(server));

        // The built-in page on the HTTP/1.1 endpoint.
        using var http = new HttpClient { BaseAddress = server.HttpAddress };
        using HttpResponseMessage page = await http.GetAsync(new Uri("/", UriKind.Relative));
        Assert.Equal(HttpStatusCode.OK, page.StatusCode);
        Assert.Equal("text/html", page.Content.Headers.ContentType?.MediaType);
        Assert.Contains("<title>SummaryService", await page.Content.ReadAsStringAsync(), StringComparison.Ordinal);

        // The store's files lie in the volume and belong to the image's user, not root.
        ImageSettings settings = await ImageSettings.ReadAsync(image);
        IReadOnlyDictionary<string, int> owners = await server.OwnersAsync(settings.DataDirectory);
        Assert.Contains(owners.Keys, name => name.Contains("/wal/", StringComparison.Ordinal));
        Assert.All(owners, entry => Assert.Equal(UserId(settings.User), entry.Value));
    }

    private static int UserId(string user) =>
        int.TryParse(user.Split(':')[0], NumberStyles.None, CultureInfo.InvariantCulture, out int id) ? id : -1;

    /// <summary>Docker's verdict once the image's health check has run (its first run comes one interval after the start).</summary>
    private static async Task<string> HealthStatusAsync(ServerContainer server)
    {
        string status = "";
        for (var waited = TimeSpan.Zero; waited < HealthWait; waited += TimeSpan.FromMilliseconds(500))
        {
            status = (await server.InspectAsync()).State?.Health?.Status ?? "none";
            if (status != "starting")
            {
                return status;
            }

            await Task.Delay(500);
        }

        return status;
    }
}
