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
/// <remarks>
/// One named exception: the ends of the mean's interval are compared to nine significant digits.
/// From 200 degrees of freedom on, the t critical value comes from a series expansion instead of
/// root-finding (<c>StudentTCritical</c>); the two agree to ~1e-11, not to the last bit.
/// </remarks>
internal static class JsonSubset
{
    private static readonly HashSet<string> MeanIntervalEnds = ["MeanLow", "MeanHigh"];

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
                bool meanEnd = MeanIntervalEnds.Any(name => path.EndsWith("." + name, StringComparison.Ordinal));
                bool equal = meanEnd ? Math.Abs(a1 - e1) <= 1e-9 * Math.Abs(e1) : e1.Equals(a1);
                Assert.True(equal, $"{path}: expected {e1.ToString("R", CultureInfo.InvariantCulture)}, got {a1.ToString("R", CultureInfo.InvariantCulture)}");
                break;
            default:
                Assert.True(expected.ToString() == actual.ToString() && expected.ValueKind == actual.ValueKind, $"{path}: expected {expected}, got {actual}");
                break;
        }
    }
}
