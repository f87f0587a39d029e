namespace SummaryService.Cli.Demo;

/// <summary>
/// The demo's fictional company, Otterbyte Parcels, a parcel-delivery shop with five services whose
/// measurements have different shapes, in three regions. At the deploy, checkout's new release widens
/// its latency tail; nothing else changes, so a comparison across the deploy moves only checkout.
/// </summary>
public static class OtterbyteScenario
{
    /// <summary>The company's name as the demo prints it.</summary>
    public const string Company = "Otterbyte Parcels";

    /// <summary>Metric of the service whose tail the deploy widens.</summary>
    public const string Checkout = "otterbyte.checkout.latency_ms";

    /// <summary>Metric of the internal call the deploy leaves alone.</summary>
    public const string Pricing = "otterbyte.pricing.latency_ms";

    /// <summary>Metric of the bimodal route.</summary>
    public const string Catalogue = "otterbyte.catalogue.latency_ms";

    /// <summary>Metric of the integer queue depths.</summary>
    public const string QueueDepth = "otterbyte.dispatch.queue_depth";

    /// <summary>Metric of the response status codes.</summary>
    public const string Status = "otterbyte.edge.status";

    /// <summary>Regions and the share of traffic each serves.</summary>
    public static IReadOnlyList<(string Region, double Share)> Regions { get; } = [("north", 0.5), ("south", 0.3), ("west", 0.2)];

    private static readonly double[] StatusWeights = [0.86, 0.04, 0.02, 0.03, 0.015, 0.02, 0.005, 0.007, 0.003];
    private static readonly double[] StatusCodes = [200, 201, 204, 304, 400, 404, 429, 500, 503];

    /// <summary>The five services.</summary>
    public static IReadOnlyList<DemoService> Services { get; } =
    [
        new(Checkout, "checkout", "/checkout", "right-skewed lognormal latency with rare slow outliers; the deploy widens its tail", CheckoutLatency),
        new(Catalogue, "catalogue", "/items/{id}", "bimodal: cache hits near 6 ms, misses near 60 ms", CatalogueLatency),
        new(Pricing, "pricing", "internal/quote", "near-normal internal call around 25 ms, unchanged by the deploy", (r, _) => Math.Max(1, r.Normal(25, 3))),
        new(QueueDepth, "dispatch", "queue/outbound", "integer queue depths (Poisson, mean 9)", (r, _) => r.Poisson(9)),
        new(Status, "edge", "/api", "HTTP-like response status codes: the modes matter, not the mean", (r, _) => StatusCodes[r.Pick(StatusWeights)]),
    ];

    private static double CheckoutLatency(DemoRandom random, bool deployed)
    {
        // Before: median 120 ms, log-sd 0.35, 0.4% slow outliers. After: log-sd 0.6 and 2% outliers,
        // so the median barely moves while the tail, the mean and the skewness do.
        double sigma = deployed ? 0.6 : 0.35;
        double outliers = deployed ? 0.02 : 0.004;
        double value = random.LogNormal(120, sigma);
        return random.Uniform() < outliers ? value * (5 + (10 * random.Uniform())) : value;
    }

    private static double CatalogueLatency(DemoRandom random, bool deployed) =>
        random.Uniform() < 0.75 ? Math.Max(0.5, random.Normal(6, 1.2)) : random.LogNormal(60, 0.25);
}
