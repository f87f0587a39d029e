using System.Net;
using SummaryService.Server.Tests.Support;

namespace SummaryService.Server.Tests.Page;

/// <summary>The built-in page comes from the server itself and loads nothing from elsewhere.</summary>
public sealed class PageServingTests
{
    [Fact]
    public async Task The_page_and_its_scripts_are_served_from_the_assembly()
    {
        await using var server = new TestServer();
        using HttpClient http = server.CreateHttpClient();

        using var page = await http.GetAsync("/");
        Assert.Equal(HttpStatusCode.OK, page.StatusCode);
        Assert.Equal("text/html", page.Content.Headers.ContentType?.MediaType);
        string html = await page.Content.ReadAsStringAsync();
        Assert.Contains("Distribution view", html, StringComparison.Ordinal);
        Assert.DoesNotContain("://", html.Replace("http://www.w3.org", "", StringComparison.Ordinal), StringComparison.Ordinal); // every asset is same-origin

        foreach (string asset in new[] { "page.css", "svg.js", "clock.js", "api.js", "bands.js", "histogram.js", "figures.js", "page.js" })
        {
            using var part = await http.GetAsync($"/page/{asset}");
            Assert.Equal(HttpStatusCode.OK, part.StatusCode);
        }

        using var missing = await http.GetAsync("/page/secrets.json");
        Assert.Equal(HttpStatusCode.NotFound, missing.StatusCode);
    }
}
