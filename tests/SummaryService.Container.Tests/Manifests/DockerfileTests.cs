using SummaryService.Container.Tests.Support;

namespace SummaryService.Container.Tests.Manifests;

/// <summary>The Dockerfile, read instruction by instruction, against the server it packages.</summary>
public sealed class DockerfileTests
{
    private static readonly IReadOnlyList<DockerfileInstruction> Instructions = DockerfileInstructions.Read();

    [Fact]
    public void Base_images_are_build_arguments_and_both_builds_finish_on_the_shared_runtime_stage()
    {
        Assert.Equal(
            ["${RUNTIME_IMAGE} AS runtime-base", "runtime-base AS prepublished", "${SDK_IMAGE} AS build", "runtime-base AS runtime"],
            Instructions.Where(i => i.Keyword == "FROM").Select(i => i.Arguments));
        Assert.Contains(Instructions.TakeWhile(i => i.Keyword != "FROM"), i => i.Keyword == "ARG" && i.Arguments.StartsWith("RUNTIME_IMAGE=", StringComparison.Ordinal));
        Assert.Contains(Instructions.TakeWhile(i => i.Keyword != "FROM"), i => i.Keyword == "ARG" && i.Arguments.StartsWith("SDK_IMAGE=", StringComparison.Ordinal));

        // Each final stage only adds the app, so the two images differ in nothing else.
        Assert.Equal([("FROM", "runtime-base AS prepublished"), ("COPY", ". /app/")], Stage("prepublished"));
        Assert.Equal([("FROM", "runtime-base AS runtime"), ("COPY", "--from=build /app /app/")], Stage("runtime"));

        // The SDK stage publishes with the script the offline build uses.
        Assert.Contains(Stage("build"), i => i.Keyword == "RUN" && i.Arguments == "bash deploy/container/publish-server.sh /app /tmp/publish-work");
        Assert.Contains("publish-server.sh", File.ReadAllText(RepositoryFiles.PathOf("deploy", "container", "build-offline.sh")), StringComparison.Ordinal);
    }

    [Fact]
    public void The_server_listens_on_its_own_ports_on_every_address_and_exposes_both()
    {
        IReadOnlyDictionary<string, string> environment = DockerfileInstructions.Environment(ImageLayout.Stage);

        Assert.Equal($"http://0.0.0.0:{ServerDefaults.GrpcPort}", environment["Kestrel__Endpoints__Grpc__Url"]);
        Assert.Equal($"http://0.0.0.0:{ServerDefaults.HttpPort}", environment["Kestrel__Endpoints__Http__Url"]);
        Assert.Equal($"{ServerDefaults.GrpcPort} {ServerDefaults.HttpPort}", Assert.Single(DockerfileInstructions.Of(ImageLayout.Stage, "EXPOSE")));
    }

    [Fact]
    public void The_data_directory_is_the_volume_and_belongs_to_a_numeric_user_that_is_not_root()
    {
        var (user, group) = ImageLayout.Account;

        Assert.True(user > 0 && group > 0, $"USER {user}:{group}");
        Assert.Equal(ImageLayout.DataDirectory, Assert.Single(DockerfileInstructions.Of(ImageLayout.Stage, "VOLUME")));
        Assert.Contains($"chown {user}:{group} {ImageLayout.DataDirectory}", Assert.Single(DockerfileInstructions.Of(ImageLayout.Stage, "RUN")), StringComparison.Ordinal);
    }

    [Fact]
    public void The_entrypoint_is_the_published_server_and_the_health_check_is_its_probe_mode()
    {
        Assert.Equal("""["/app/SummaryService.Server"]""", Assert.Single(DockerfileInstructions.Of(ImageLayout.Stage, "ENTRYPOINT")));
        Assert.EndsWith("""CMD ["/app/SummaryService.Server", "--probe"]""", Assert.Single(DockerfileInstructions.Of(ImageLayout.Stage, "HEALTHCHECK")), StringComparison.Ordinal);
        Assert.Equal("SIGTERM", Assert.Single(DockerfileInstructions.Of(ImageLayout.Stage, "STOPSIGNAL")));
    }

    private static IReadOnlyList<(string Keyword, string Arguments)> Stage(string name) =>
        [.. Instructions.Where(i => i.Stage == name).Select(i => (i.Keyword, i.Arguments))];
}
