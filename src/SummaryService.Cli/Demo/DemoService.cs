namespace SummaryService.Cli.Demo;

/// <summary>One service of the demo company and the shape its measurements take.</summary>
/// <param name="Metric">Metric name.</param>
/// <param name="Service">Value of the <c>service</c> label.</param>
/// <param name="Route">Value of the <c>route</c> label.</param>
/// <param name="Shape">What a person should see in it, printed by the demo.</param>
/// <param name="Draw">One measurement; the flag says whether the deploy has happened.</param>
public sealed record DemoService(string Metric, string Service, string Route, string Shape, Func<DemoRandom, bool, double> Draw);
