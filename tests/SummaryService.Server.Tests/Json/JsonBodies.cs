using System.Globalization;
using System.Net.Http.Json;
using System.Text.Json;
using System.Text.Json.Nodes;

namespace SummaryService.Server.Tests.Json;

/// <summary>JSON in and out of the HTTP routes, as a script would send and read them.</summary>
internal static class JsonBodies
{
    public static async Task<HttpResponseMessage> PostAsync(this HttpClient client, string path, object body, string? bearer = null)
    {
        using var request = new HttpRequestMessage(HttpMethod.Post, path) { Content = JsonContent.Create(body) };
        if (bearer is not null)
        {
            request.Headers.Authorization = new System.Net.Http.Headers.AuthenticationHeaderValue("Bearer", bearer);
        }

        return await client.SendAsync(request);
    }

    public static async Task<JsonNode> ReadJsonAsync(this HttpResponseMessage response) =>
        JsonNode.Parse(await response.Content.ReadAsStringAsync()) ?? throw new InvalidOperationException("empty JSON body");

    /// <summary>A number that protobuf JSON may write as a string (64-bit integers).</summary>
    public static double Number(this JsonNode? node) => node?.GetValueKind() switch
    {
        JsonValueKind.String => double.Parse(node.GetValue<string>(), CultureInfo.InvariantCulture),
        JsonValueKind.Number => node.GetValue<double>(),
        _ => throw new InvalidOperationException($"not a number: {node?.ToJsonString()}"),
    };
}
