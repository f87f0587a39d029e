using System.Globalization;
using System.Text.Json;

namespace SummaryService.Sketches.Tests.Support;

/// <summary>
/// Checks that every figure an earlier answer held is given again, identically: each property of the
/// expected JSON must be present in the actual JSON with an equal value (numbers compared as doubles,
/// arrays element by element and of the same length). Properties the actual answer adds are ignored,
/// so an answer may gain fields without breaking the comparison. Properties named in
/// the skipping set are left out of the comparison wherever they occur.
/// </summary>
internal static class JsonSubset
{
    public static void AssertContained(JsonElement expected, JsonElement actual, string path = "$", IReadOnlySet<string>? skipping = null)
    {
        switch (expected.ValueKind)
        {
            case JsonValueKind.Object:
                Assert.True(actual.ValueKind == JsonValueKind.Object, $"{path}: expected an object, got {actual.ValueKind}");
                foreach (JsonProperty property in expected.EnumerateObject())
                {
                    if (skipping?.Contains(property.Name) == true)
                    {
                        continue;
                    }

                    Assert.True(actual.TryGetProperty(property.Name, out JsonElement value), $"{path}.{property.Name} is missing");
                    AssertContained(property.Value, value, $"{path}.{property.Name}", skipping);
                }

                break;
            case JsonValueKind.Array:
                Assert.True(actual.ValueKind == JsonValueKind.Array, $"{path}: expected an array, got {actual.ValueKind}");
                Assert.True(expected.GetArrayLength() == actual.GetArrayLength(), $"{path}: {expected.GetArrayLength()} elements expected, {actual.GetArrayLength()} given");
                int i = 0;
                foreach ((JsonElement e, JsonElement a) in expected.EnumerateArray().Zip(actual.EnumerateArray()))
                {
                    AssertContained(e, a, $"{path}[{i++}]", skipping);
                }

                break;
            case JsonValueKind.Number:
                Assert.True(actual.ValueKind == JsonValueKind.Number, $"{path}: expected a number, got {actual.ValueKind}");
                double e1 = expected.GetDouble();
                double a1 = actual.GetDouble();
                Assert.True(e1.Equals(a1), $"{path}: expected {e1.ToString("R", CultureInfo.InvariantCulture)}, got {a1.ToString("R", CultureInfo.InvariantCulture)}");
                break;
            default:
                Assert.True(expected.ToString() == actual.ToString() && expected.ValueKind == actual.ValueKind, $"{path}: expected {expected}, got {actual}");
                break;
        }
    }
}
