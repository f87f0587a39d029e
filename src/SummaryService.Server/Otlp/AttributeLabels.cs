using System.Globalization;
using Google.Protobuf;
using Google.Protobuf.Collections;
using SummaryService.Contract.Otlp.Common;

namespace SummaryService.Server.Otlp;

/// <summary>
/// OpenTelemetry attributes as series labels. Attribute keys may hold dots and other characters a
/// label name may not, so those become '_' (common practice for label-based stores:
/// <c>http.response.status_code</c> → <c>http_response_status_code</c>). Values become their text;
/// an attribute with an empty value is left out, since an empty label is how the store says "absent".
/// </summary>
public static class AttributeLabels
{
    /// <summary>The label name of an attribute key.</summary>
    public static string NameOf(string key)
    {
        ArgumentNullException.ThrowIfNull(key);
        if (key.Length == 0)
        {
            return key;
        }

        return string.Create(key.Length, key, static (span, source) =>
        {
            for (int i = 0; i < span.Length; i++)
            {
                char c = source[i];
                span[i] = char.IsAsciiLetterOrDigit(c) || c == '_' ? c : '_';
            }

            // A label name starts with a letter or '_'.
            if (char.IsAsciiDigit(span[0]))
            {
                span[0] = '_';
            }
        });
    }

    /// <summary>The text of an attribute value: scalars as written, arrays, maps and bytes in their OTLP JSON form.</summary>
    public static string TextOf(AnyValue? value) => value?.ValueCase switch
    {
        null or AnyValue.ValueOneofCase.None => "",
        AnyValue.ValueOneofCase.StringValue => value.StringValue,
        AnyValue.ValueOneofCase.BoolValue => value.BoolValue ? "true" : "false",
        AnyValue.ValueOneofCase.IntValue => value.IntValue.ToString(CultureInfo.InvariantCulture),
        AnyValue.ValueOneofCase.DoubleValue => value.DoubleValue.ToString("R", CultureInfo.InvariantCulture),
        _ => JsonFormatter.Default.Format(value),
    };

    /// <summary>
    /// Adds the attributes to the labels (a later attribute of the same label name replaces an
    /// earlier one, so point attributes override resource ones); null when two different keys of
    /// this list would become the same label, with the reason.
    /// </summary>
    public static string? AddTo(Dictionary<string, string> labels, RepeatedField<KeyValue> attributes, Func<string, bool>? allowed = null)
    {
        ArgumentNullException.ThrowIfNull(labels);
        ArgumentNullException.ThrowIfNull(attributes);
        Dictionary<string, string>? keyOf = null;
        foreach (KeyValue attribute in attributes)
        {
            if (allowed is not null && !allowed(attribute.Key))
            {
                continue;
            }

            string name = NameOf(attribute.Key);
            keyOf ??= new Dictionary<string, string>(StringComparer.Ordinal);
            if (keyOf.TryGetValue(name, out string? earlier) && !string.Equals(earlier, attribute.Key, StringComparison.Ordinal))
            {
                return $"attributes '{earlier}' and '{attribute.Key}' both become label '{name}'";
            }

            keyOf[name] = attribute.Key;
            string text = TextOf(attribute.Value);
            if (text.Length == 0)
            {
                labels.Remove(name);
            }
            else
            {
                labels[name] = text;
            }
        }

        return null;
    }
}
