using System.Globalization;
using System.Net;
using System.Net.Http.Headers;
using System.Text;
using System.Text.Json;
using System.Text.Json.Nodes;
using Google.Protobuf;
using Google.Protobuf.Reflection;

namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>
/// Sends valid, retyped, corrupted and noise bodies to every JSON route of the contract (found from
/// the google.api.http options in the descriptors) and checks each answer: never a server error,
/// never the reader's bare "not correctly formatted", and a retyped value refused naming its path.
/// </summary>
internal sealed class JsonFuzzer(HttpClient http, FuzzTally tally, AcceptedLedger ledger, long nowMs)
{
    // What the JSON reader says when it refuses a body itself; the body check must have spoken first.
    private static readonly string[] ReaderPhrases =
    [
        "Request JSON payload is not correctly formatted", "Unable to ", "The input string", "Value was either too large", "Invalid Duration value",
        "Expected string value", "Multiple values specified", "Value cannot be null", "Cannot get the value",
    ];

    private enum Mutation
    {
        None,
        Retyped,
        Corrupted,
        Noise,
        ContentType,
    }

    /// <summary>Sends at least <paramref name="messages"/> bodies, <paramref name="sendersPerRoute"/> senders per route.</summary>
    public async Task RunAsync(int messages, int sendersPerRoute, int seed, CancellationToken cancellationToken)
    {
        var routes = ContractSurface.Methods.Where(m => m.Route is not null).ToArray();
        await Task.WhenAll(Enumerable.Range(0, routes.Length * sendersPerRoute).Select(sender => Task.Run(async () =>
        {
            ContractMethod method = routes[sender % routes.Length];
            var random = new Random(seed + sender);
            var forge = new MessageForge(random, nowMs, MessageForge.MetricsFor(method));
            while (tally.Messages < messages && !cancellationToken.IsCancellationRequested)
            {
                await SendOneAsync(method, random, forge).ConfigureAwait(false);
            }
        }, cancellationToken))).ConfigureAwait(false);
    }

    private async Task SendOneAsync(ContractMethod method, Random random, MessageForge forge)
    {
        var rule = method.Route!;
        if (rule.Body != "*")
        {
            await QueryAsync(method, random).ConfigureAwait(false);
            return;
        }

        string? json = Format(forge.Build(method.Input));
        if (json is null)
        {
            return;
        }

        var mutation = (Mutation)random.Next(5);
        switch (mutation)
        {
            case Mutation.Retyped:
                var (retyped, path) = Retype(JsonNode.Parse(json)!, method.Input, random);
                if (path is null)
                {
                    goto default;
                }

                // The unchanged body first: when it is already refused for its shape, the retyped one may be refused for that instead.
                var (_, originalMessage) = await PostAsync(method, Encoding.UTF8.GetBytes(json), "application/json", Mutation.None).ConfigureAwait(false);
                var (status, message) = await PostAsync(method, Encoding.UTF8.GetBytes(retyped.ToJsonString()), "application/json", Mutation.Retyped).ConfigureAwait(false);
                bool shapeRefusedBefore = originalMessage?.Contains("was refused:", StringComparison.Ordinal) == true;
                if (!shapeRefusedBefore && (status != HttpStatusCode.BadRequest || message?.Contains($"{path}: ", StringComparison.Ordinal) != true))
                {
                    tally.Violation($"{rule.Post} retyped {path}: {(int)status} \"{message}\" for {retyped.ToJsonString()}");
                }

                return;
            case Mutation.Corrupted:
                await PostAsync(method, Corrupt(Encoding.UTF8.GetBytes(json), random), "application/json", mutation).ConfigureAwait(false);
                return;
            case Mutation.Noise:
                var noise = new byte[random.Next(0, 120)];
                random.NextBytes(noise);
                await PostAsync(method, noise, "application/json", mutation).ConfigureAwait(false);
                return;
            case Mutation.ContentType:
                string[] types = ["text/plain", "application/json; charset=iso-8859-1", "application/x-www-form-urlencoded", "application/problem+json", "multipart/form-data; boundary=x"];
                await PostAsync(method, Encoding.UTF8.GetBytes(json), types[random.Next(types.Length)], mutation).ConfigureAwait(false);
                return;
            default:
                await PostAsync(method, Encoding.UTF8.GetBytes(json), "application/json", Mutation.None).ConfigureAwait(false);
                return;
        }
    }

    private async Task<(HttpStatusCode Status, string? Message)> PostAsync(ContractMethod method, byte[] body, string contentType, Mutation mutation)
    {
        string path = method.Route!.Post;
        using var request = new HttpRequestMessage(HttpMethod.Post, path) { Content = new ByteArrayContent(body) };
        request.Content.Headers.ContentType = MediaTypeHeaderValue.Parse(contentType);
        using var cancel = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        using HttpResponseMessage response = await http.SendAsync(request, HttpCompletionOption.ResponseHeadersRead, cancel.Token).ConfigureAwait(false);
        string? message = null;
        string? text = null;
        if (method.StreamsReplies && response.IsSuccessStatusCode)
        {
            // A watch that started: its first update is enough; hanging up ends it.
            using var reader = new StreamReader(await response.Content.ReadAsStreamAsync(cancel.Token).ConfigureAwait(false));
            await reader.ReadLineAsync(cancel.Token).ConfigureAwait(false);
        }
        else
        {
            text = await response.Content.ReadAsStringAsync(cancel.Token).ConfigureAwait(false);
            message = MessageOf(text);
        }

        int status = (int)response.StatusCode;
        tally.Record(path, $"HTTP {status}");
        if (status >= 500 || message is not null && ReaderPhrases.Any(p => message.Contains(p, StringComparison.Ordinal)))
        {
            tally.Violation($"{path} {mutation}: {status} \"{message}\" for {Printable(body)}");
        }
        else if (status == 400 && mutation is Mutation.Corrupted or Mutation.Noise && message?.Contains("was refused:", StringComparison.Ordinal) == true && !message.Contains(method.Input.Name, StringComparison.Ordinal))
        {
            tally.Violation($"{path} {mutation}: refusal does not name {method.Input.Name}: \"{message}\"");
        }

        if (status == 200 && text is not null && method.Input.FullName == Contract.V1.Batch.Descriptor.FullName)
        {
            AccountPush(body, text);
        }

        return (response.StatusCode, message);
    }

    private async Task QueryAsync(ContractMethod method, Random random)
    {
        string path = method.Route!.Get;
        var query = new StringBuilder("?");
        foreach (FieldDescriptor field in method.Input.Fields.InDeclarationOrder())
        {
            query.Append(CultureInfo.InvariantCulture, $"{field.JsonName}={Uri.EscapeDataString(random.Next(3) switch { 0 => MessageForge.Metrics[random.Next(MessageForge.Metrics.Length)], 1 => "x\u0000\u202E🦦", _ => new string('q', random.Next(0, 300)) })}&");
        }

        query.Append(CultureInfo.InvariantCulture, $"stray%FF%FE={random.Next()}&%00=1");
        using HttpResponseMessage response = await http.GetAsync(path + query).ConfigureAwait(false);
        tally.Record(path, $"HTTP {(int)response.StatusCode}");
        if ((int)response.StatusCode >= 500)
        {
            tally.Violation($"{path}: {(int)response.StatusCode} for {query}");
        }
    }

    // The ledger follows the reader's rules: the last "metric" and "values" keys win, as with any duplicated key.
    private void AccountPush(byte[] body, string replyText)
    {
        using var reply = JsonDocument.Parse(replyText);
        if (reply.RootElement.TryGetProperty("duplicate", out var duplicate) && duplicate.GetBoolean())
        {
            return;
        }

        using var document = JsonDocument.Parse(body);
        var batch = new Contract.V1.Batch();
        foreach (JsonProperty property in document.RootElement.EnumerateObject())
        {
            if (property.Name == "metric")
            {
                batch.Metric = property.Value.GetString();
            }
            else if (property.Name == "values")
            {
                batch.Values.Clear();
                batch.Values.AddRange(property.Value.EnumerateArray().Select(v => v.GetDouble()));
            }
        }

        ledger.Add(batch);
    }

    /// <summary>Replaces one value, somewhere in the body, with a value of the wrong JSON type; returns the path the refusal must name.</summary>
    private static (JsonNode Body, string? Path) Retype(JsonNode body, MessageDescriptor type, Random random)
    {
        var places = new List<(JsonNode Parent, object Key, string Path, string Kind)>();
        Collect(body, type, "", places);
        if (places.Count == 0)
        {
            return (body, null);
        }

        var (parent, key, path, kind) = places[random.Next(places.Count)];
        JsonNode? wrong = WrongFor(kind, random);
        if (key is string name)
        {
            parent[name] = wrong;
        }
        else
        {
            parent[(int)key] = wrong;
        }

        return (body, path);
    }

    private static void Collect(JsonNode node, MessageDescriptor type, string path, List<(JsonNode, object, string, string)> places)
    {
        if (node is not JsonObject obj || type.File.Package == "google.protobuf")
        {
            return;
        }

        foreach (var (name, child) in obj.ToArray())
        {
            FieldDescriptor? field = type.Fields.InDeclarationOrder().FirstOrDefault(f => f.JsonName == name || f.Name == name);
            if (field is null || child is null)
            {
                continue;
            }

            string at = path.Length == 0 ? name : $"{path}.{name}";
            places.Add((obj, name, at, field.IsMap ? "map" : field.IsRepeated ? "list" : KindOf(field)));
            if (field.IsMap && child is JsonObject entries)
            {
                FieldDescriptor value = field.MessageType.FindFieldByNumber(2);
                foreach (var (entryKey, entryValue) in entries.ToArray())
                {
                    string entryPath = $"{at}[{JsonSerializer.Serialize(entryKey)}]";
                    places.Add((entries, entryKey, entryPath, KindOf(value)));
                    if (value.FieldType == FieldType.Message && entryValue is not null)
                    {
                        Collect(entryValue, value.MessageType, entryPath, places);
                    }
                }
            }
            else if (field.IsRepeated && child is JsonArray items)
            {
                for (int i = 0; i < items.Count; i++)
                {
                    places.Add((items, i, $"{at}[{i}]", KindOf(field)));
                    if (field.FieldType == FieldType.Message && items[i] is { } item)
                    {
                        Collect(item, field.MessageType, $"{at}[{i}]", places);
                    }
                }
            }
            else if (field.FieldType == FieldType.Message)
            {
                Collect(child, field.MessageType, at, places);
            }
        }
    }

    private static string KindOf(FieldDescriptor field) => field.FieldType switch
    {
        FieldType.Message when field.MessageType.FullName == Google.Protobuf.WellKnownTypes.Duration.Descriptor.FullName => "duration",
        FieldType.Message => "message",
        FieldType.Double or FieldType.Float => "double",
        FieldType.String => "string",
        FieldType.Bool => "bool",
        FieldType.Bytes or FieldType.Enum => "other",
        _ => "integer",
    };

    private static JsonNode? WrongFor(string kind, Random random)
    {
        JsonNode?[] choices = kind switch
        {
            "double" => [JsonValue.Create("x"), JsonValue.Create(true), new JsonObject(), new JsonArray(), JsonValue.Create("2.5"), JsonValue.Create("nan")],
            "integer" => [JsonValue.Create(1.5), JsonValue.Create("x"), JsonValue.Create(true), new JsonObject(), JsonValue.Create(-1e30), JsonValue.Create("0x10")],
            "string" => [JsonValue.Create(5), JsonValue.Create(false), new JsonObject(), new JsonArray()],
            "bool" => [JsonValue.Create("yes"), JsonValue.Create(1), new JsonArray()],
            "duration" => [JsonValue.Create(60), JsonValue.Create("60"), JsonValue.Create("1e3s"), JsonValue.Create("1.5 s"), new JsonObject()],
            "message" => [JsonValue.Create(5), JsonValue.Create("x"), new JsonArray()],
            "list" => [JsonValue.Create(5), JsonValue.Create("x"), new JsonObject()],
            "map" => [new JsonArray(), JsonValue.Create(5), JsonValue.Create("x")],
            _ => [new JsonArray(), new JsonObject()],
        };
        return choices[random.Next(choices.Length)];
    }

    private static byte[] Corrupt(byte[] body, Random random)
    {
        var bytes = new List<byte>(body);
        int at = bytes.Count == 0 ? 0 : random.Next(bytes.Count);
        switch (random.Next(4))
        {
            case 0:
                bytes.RemoveRange(at, bytes.Count - at);
                break;
            case 1 when bytes.Count > 0:
                bytes.RemoveAt(at);
                break;
            case 2:
                const string Stray = "{}[],:\"\\x0-e.\u007F";
                bytes.Insert(at, (byte)Stray[random.Next(Stray.Length)]);
                break;
            default:
                bytes.InsertRange(at, [0xC3, 0x28]); // an invalid UTF-8 sequence
                break;
        }

        return [.. bytes];
    }

    private static string? Format(IMessage message)
    {
        try
        {
            return JsonFormatter.Default.Format(message);
        }
        catch (InvalidOperationException)
        {
            return null; // a duration or value protobuf JSON cannot express; the gRPC fuzzer covers those
        }
    }

    private static string? MessageOf(string text)
    {
        try
        {
            using var document = JsonDocument.Parse(text);
            return document.RootElement.ValueKind == JsonValueKind.Object && document.RootElement.TryGetProperty("message", out var message) ? message.GetString() : null;
        }
        catch (JsonException)
        {
            return null;
        }
    }

    private static string Printable(byte[] body) => Encoding.UTF8.GetString(body[..Math.Min(body.Length, 400)]);
}
