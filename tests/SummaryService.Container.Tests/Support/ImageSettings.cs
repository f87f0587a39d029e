using Docker.DotNet.Models;

namespace SummaryService.Container.Tests.Support;

/// <summary>What the image declares about itself, read from the engine: the tests mount and check against it.</summary>
internal sealed record ImageSettings(string User, string DataDirectory, IReadOnlyCollection<string> Volumes, IReadOnlyList<string> HealthCheck, IReadOnlyCollection<string> ExposedPorts)
{
    public static async Task<ImageSettings> ReadAsync(ServerImage image)
    {
        ImageInspectResponse inspected = await image.Docker.Images.InspectImageAsync(image.Tag);
        DockerOCIImageConfig config = inspected.Config ?? throw new InvalidOperationException($"The engine gave no settings for {image.Tag}.");
        string dataDirectory = (config.Env ?? []).Select(e => e.Split('=', 2)).Where(e => e[0] == "Persistence__DataDirectory").Select(e => e[1]).SingleOrDefault()
            ?? throw new InvalidOperationException($"The image {image.Tag} sets no Persistence__DataDirectory.");
        return new ImageSettings(
            config.User ?? "",
            dataDirectory,
            [.. (config.Volumes ?? new Dictionary<string, EmptyStruct>()).Keys],
            [.. config.Healthcheck?.Test ?? []],
            [.. (config.ExposedPorts ?? new Dictionary<string, EmptyStruct>()).Keys]);
    }
}
