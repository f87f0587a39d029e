namespace SummaryService.Container.Tests.Support;

/// <summary>
/// A test of the running image. With no reachable Docker engine it is skipped with the reason shown
/// in the test results, unless <see cref="DockerEngine.RequiredVariable"/> is set (as in CI): then it
/// runs and fails on the missing engine.
/// </summary>
[AttributeUsage(AttributeTargets.Method)]
public sealed class DockerFactAttribute : FactAttribute
{
    public DockerFactAttribute()
    {
        if (!DockerEngine.Required && DockerEngine.WhyUnreachable is { } reason)
        {
            Skip = $"No Docker engine: {reason}. Set {DockerEngine.RequiredVariable}=1 to make this a failure.";
        }
    }
}
