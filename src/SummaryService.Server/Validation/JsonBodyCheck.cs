using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using System.Text.Unicode;
using Google.Protobuf.Reflection;
using Google.Protobuf.WellKnownTypes;

namespace SummaryService.Server.Validation;

/// <summary>
/// Walks a JSON request body against the message it must become and names the first thing wrong,
/// with its path and value: <c>values[1]: "x" is not a number</c>. The JSON routes' own reader only
/// says that the payload "is not correctly formatted".
/// </summary>
/// <remarks>
/// It accepts exactly what the JSON transcoding reader accepts (field names in their JSON or proto
/// form; doubles as numbers or "NaN"/"Infinity"/"-Infinity"; 64-bit integers as numbers or strings;
/// 32-bit integers and booleans as literals; durations as "1.5s"; null for a field left unset), and
/// in one respect is stricter, as the protobuf JSON mapping asks of parsers by default: a field the
/// message does not have is refused rather than silently dropped, so a misspelt filter cannot widen
/// a query unnoticed.
/// </remarks>
public static partial class JsonBodyCheck
{
    private const int ShownChars = 40;

    // The transcoding reader's Duration form and range (seconds as a .NET DateTime can hold them; no negative fractions).
    private const long MinDurationSeconds = -62_135_596_800;
    private const long MaxDurationSeconds = 253_402_300_799;

    /// <summary>What is wrong with <paramref name="body"/> as a <paramref name="type"/>, or null when nothing is.</summary>
    public static string? FindProblem(ReadOnlyMemory<byte> body, MessageDescriptor type)
    {
        ArgumentNullException.ThrowIfNull(type);
        if (InvalidUtf8At(body.Span) is { } at)
        {
            return $"the body is not valid UTF-8 (byte {at})";
        }

        JsonDocument document;
        try
        {
            document = JsonDocument.Parse(body);
        }
        catch (JsonException ex)
        {
            return $"the body is not valid JSON: {ex.Message}";
        }

        using (document)
        {
            JsonElement root = document.RootElement;
            return root.ValueKind == JsonValueKind.Object
                ? MessageProblem(root, type, "")
                : $"the body is {Show(root)}; send a JSON object with the fields of {type.Name}";
        }
    }

    private static string? MessageProblem(JsonElement value, MessageDescriptor type, string path)
    {
        if (type.FullName == Duration.Descriptor.FullName)
        {
            return value.ValueKind == JsonValueKind.String && IsDuration(value.GetString()!)
                ? null
                : $"{path}: {Show(value)} is not a duration; write seconds with a trailing \"s\", like \"90s\" or \"0.5s\"";
        }

        if (type.File.Package == "google.protobuf")
        {
            return null; // other well-known types have JSON forms of their own; the reader checks them
        }

        if (value.ValueKind != JsonValueKind.Object)
        {
            return $"{path}: {Show(value)} is not an object ({type.Name})";
        }

        var oneofs = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (JsonProperty property in value.EnumerateObject())
        {
            if (!IsText(property))
            {
                return $"{(path.Length == 0 ? "the body" : path)}: a field name holds an unpaired surrogate escape and is not text";
            }

            string at = path.Length == 0 ? property.Name : $"{path}.{property.Name}";
            FieldDescriptor? field = FieldNamed(type, property.Name);
            if (field is null)
            {
                string known = string.Join(", ", type.Fields.InDeclarationOrder().Select(f => f.JsonName));
                return $"{at}: {type.Name} has no field \"{property.Name}\"; its fields are {known}";
            }

            if (field.RealContainingOneof is { } oneof && property.Value.ValueKind != JsonValueKind.Null && !oneofs.TryAdd(oneof.Name, property.Name))
            {
                return $"{at}: \"{oneofs[oneof.Name]}\" is set already; {type.Name} takes one of {string.Join(", ", oneof.Fields.Select(f => f.JsonName))}";
            }

            if (FieldProblem(property.Value, field, at) is { } problem)
            {
                return problem;
            }
        }

        return null;
    }

    private static string? FieldProblem(JsonElement value, FieldDescriptor field, string path)
    {
        if (value.ValueKind == JsonValueKind.Null)
        {
            return field.IsRepeated ? $"{path}: null is not {(field.IsMap ? "an object" : "a list")}; leave the field out instead" : null;
        }

        if (field.IsMap)
        {
            if (value.ValueKind != JsonValueKind.Object)
            {
                return $"{path}: {Show(value)} is not an object of entries";
            }

            FieldDescriptor key = field.MessageType.FindFieldByNumber(1);
            FieldDescriptor entryValue = field.MessageType.FindFieldByNumber(2);
            foreach (JsonProperty entry in value.EnumerateObject())
            {
                if (!IsText(entry))
                {
                    return $"{path}: a key holds an unpaired surrogate escape and is not text";
                }

                string at = $"{path}[{JsonSerializer.Serialize(entry.Name)}]";
                if (key.FieldType != FieldType.String && !IsKey(entry.Name, key.FieldType))
                {
                    return $"{at}: the key is not a {key.FieldType.ToString().ToLowerInvariant()}";
                }

                if (entry.Value.ValueKind == JsonValueKind.Null)
                {
                    return $"{at}: null is not a value; leave the entry out instead";
                }

                if (ValueProblem(entry.Value, entryValue, at) is { } problem)
                {
                    return problem;
                }
            }

            return null;
        }

        if (field.IsRepeated)
        {
            if (value.ValueKind != JsonValueKind.Array)
            {
                return $"{path}: {Show(value)} is not a list";
            }

            int index = 0;
            foreach (JsonElement item in value.EnumerateArray())
            {
                string at = $"{path}[{index++}]";
                if (item.ValueKind == JsonValueKind.Null)
                {
                    return $"{at}: null is not an element; leave it out instead";
                }

                if (ValueProblem(item, field, at) is { } problem)
                {
                    return problem;
                }
            }

            return null;
        }

        return ValueProblem(value, field, path);
    }

    private static string? ValueProblem(JsonElement value, FieldDescriptor field, string path) => field.FieldType switch
    {
        FieldType.Message or FieldType.Group => MessageProblem(value, field.MessageType, path),
        FieldType.Double or FieldType.Float => value.ValueKind == JsonValueKind.Number || (value.ValueKind == JsonValueKind.String && value.GetString() is "NaN" or "Infinity" or "-Infinity")
            ? null
            : $"{path}: {Show(value)} is not a number{(value.ValueKind == JsonValueKind.String ? " (numbers go without quotes; only \"NaN\", \"Infinity\" and \"-Infinity\" are quoted)" : "")}",
        FieldType.Int32 or FieldType.SInt32 or FieldType.SFixed32 => value.ValueKind == JsonValueKind.Number && value.TryGetInt32(out _) ? null : NotWhole(value, path, int.MinValue, int.MaxValue),
        FieldType.UInt32 or FieldType.Fixed32 => value.ValueKind == JsonValueKind.Number && value.TryGetUInt32(out _) ? null : NotWhole(value, path, uint.MinValue, uint.MaxValue),
        FieldType.Int64 or FieldType.SInt64 or FieldType.SFixed64 => (value.ValueKind == JsonValueKind.Number && value.TryGetInt64(out _)) || (value.ValueKind == JsonValueKind.String && long.TryParse(value.GetString(), NumberStyles.Integer, CultureInfo.InvariantCulture, out _))
            ? null
            : NotWhole(value, path, long.MinValue, long.MaxValue),
        FieldType.UInt64 or FieldType.Fixed64 => (value.ValueKind == JsonValueKind.Number && value.TryGetUInt64(out _)) || (value.ValueKind == JsonValueKind.String && ulong.TryParse(value.GetString(), NumberStyles.Integer, CultureInfo.InvariantCulture, out _))
            ? null
            : NotWhole(value, path, ulong.MinValue, ulong.MaxValue),
        FieldType.Bool => value.ValueKind is JsonValueKind.True or JsonValueKind.False ? null : $"{path}: {Show(value)} is not true or false",
        FieldType.String => value.ValueKind != JsonValueKind.String ? $"{path}: {Show(value)} is not a string" : IsText(value) ? null : $"{path}: {Show(value)} holds an unpaired surrogate escape and is not text",
        FieldType.Bytes => value.ValueKind == JsonValueKind.String && Convert.TryFromBase64String(value.GetString()!, new byte[value.GetString()!.Length], out _) ? null : $"{path}: {Show(value)} is not base64 text",
        FieldType.Enum => (value.ValueKind == JsonValueKind.String && field.EnumType.FindValueByName(value.GetString()!) is not null) || (value.ValueKind == JsonValueKind.Number && value.TryGetInt32(out _))
            ? null
            : $"{path}: {Show(value)} is not one of {string.Join(", ", field.EnumType.Values.Select(v => v.Name))}",
        _ => null,
    };

    private static string NotWhole(JsonElement value, string path, decimal min, decimal max) =>
        $"{path}: {Show(value)} is not a whole number from {min} to {max}";

    private static FieldDescriptor? FieldNamed(MessageDescriptor type, string name)
    {
        foreach (FieldDescriptor field in type.Fields.InDeclarationOrder())
        {
            if (field.JsonName == name || field.Name == name)
            {
                return field;
            }
        }

        return null;
    }

    private static bool IsKey(string key, FieldType type) => type switch
    {
        FieldType.Bool => key is "true" or "false",
        FieldType.UInt32 or FieldType.Fixed32 or FieldType.UInt64 or FieldType.Fixed64 => ulong.TryParse(key, NumberStyles.None, CultureInfo.InvariantCulture, out _),
        _ => long.TryParse(key, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out _),
    };

    private static bool IsText(JsonElement value)
    {
        try
        {
            _ = value.GetString();
            return true;
        }
        catch (InvalidOperationException)
        {
            return false;
        }
    }

    private static bool IsText(JsonProperty property)
    {
        try
        {
            _ = property.Name;
            return true;
        }
        catch (InvalidOperationException)
        {
            return false;
        }
    }

    // The reader decodes strings lazily and throws on invalid UTF-8 inside one, so the whole body is checked first.
    private static int? InvalidUtf8At(ReadOnlySpan<byte> body)
    {
        if (Utf8.IsValid(body))
        {
            return null;
        }

        var chars = new char[body.Length];
        Utf8.ToUtf16(body, chars, out int read, out _, replaceInvalidSequences: false);
        return read;
    }

    private static bool IsDuration(string text)
    {
        Match match = DurationForm().Match(text);
        if (!match.Success || (match.Groups["int"].Value.Length > 1 && match.Groups["int"].Value[0] == '0'))
        {
            return false;
        }

        bool negative = match.Groups["sign"].Success;
        long seconds = long.Parse(match.Groups["int"].Value, CultureInfo.InvariantCulture) * (negative ? -1 : 1);
        bool fraction = match.Groups["fraction"].Success && match.Groups["fraction"].Value.Trim('.', '0').Length > 0;
        return seconds is >= MinDurationSeconds and <= MaxDurationSeconds && !(negative && fraction);
    }

    // The value as the caller wrote it, cut short.
    private static string Show(JsonElement value)
    {
        string raw = value.GetRawText();
        return raw.Length <= ShownChars ? raw : raw[..ShownChars] + "…";
    }

    [GeneratedRegex(@"^(?<sign>-)?(?<int>[0-9]{1,12})(?<fraction>\.[0-9]{1,9})?s$", RegexOptions.CultureInvariant)]
    private static partial Regex DurationForm();
}
