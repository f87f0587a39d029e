using System.Reflection;

namespace SummaryService.Server.Hosting;

/// <summary>
/// The built-in page: HTML, CSS and scripts embedded in the assembly, so the server serves them from
/// wherever it runs (no content root or wwwroot to deploy) and the browser never fetches from elsewhere.
/// </summary>
public static class PageEndpoints
{
    private const string ResourcePrefix = "page/";

    private static readonly Dictionary<string, string> ContentTypes = new(StringComparer.Ordinal)
    {
        [".html"] = "text/html; charset=utf-8",
        [".css"] = "text/css; charset=utf-8",
        [".js"] = "text/javascript; charset=utf-8",
    };

    /// <summary>GET / for the page and GET /page/{file} for its parts; anything else under /page is 404.</summary>
    public static IEndpointRouteBuilder MapSummaryPage(this IEndpointRouteBuilder endpoints)
    {
        ArgumentNullException.ThrowIfNull(endpoints);
        endpoints.MapGet("/", (HttpContext context) => Serve(context, "index.html"));
        endpoints.MapGet("/page/{file}", (HttpContext context, string file) => Serve(context, file));
        return endpoints;
    }

    private static async Task Serve(HttpContext context, string file)
    {
        Assembly assembly = typeof(PageEndpoints).Assembly;
        string extension = Path.GetExtension(file);
        await using Stream? content = ContentTypes.TryGetValue(extension, out string? type) ? assembly.GetManifestResourceStream(ResourcePrefix + file) : null;
        if (content is null || type is null)
        {
            context.Response.StatusCode = StatusCodes.Status404NotFound;
            return;
        }

        context.Response.ContentType = type;

        // The page is small and changes with the server build; revalidating each load keeps it in step.
        context.Response.Headers.CacheControl = "no-cache";
        context.Response.Headers["Content-Security-Policy"] = "default-src 'self'; style-src 'self' 'unsafe-inline'";
        await content.CopyToAsync(context.Response.Body, context.RequestAborted).ConfigureAwait(false);
    }
}
