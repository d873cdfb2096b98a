using System.Text.Encodings.Web;
using System.Text.Json;
using System.Text.Json.Serialization;

namespace NormalFormFit.Reporting.Transfer;

/// <summary>
/// The one convention of every JSON document this program writes (the report, the model comparison, the run lines),
/// applied by serialising transfer types (the <c>…Dto</c> records of this folder) rather than by hand:
/// <list type="bullet">
/// <item>keys are the snake_case names of the transfer types' properties (<see cref="JsonNamingPolicy.SnakeCaseLower"/>);
/// an estimate is written flat, as <c>x</c> and <c>x_se</c>;</item>
/// <item>a number that is not finite (NaN or ±∞: "not estimated") is written as <c>null</c> and read back as NaN;</item>
/// <item>text is written as UTF-8 without escaping beyond what JSON requires.</item>
/// </list>
/// Which keys are left out when empty is said per property (<see cref="JsonIgnoreCondition.WhenWritingNull"/>).
/// </summary>
internal static class JsonConventions
{
    /// <summary>Serializer options of every document.</summary>
    public static JsonSerializerOptions Options { get; } = Create();

    /// <summary>Writer options: indented for documents meant to be read (report, model), compact for run lines.</summary>
    public static JsonWriterOptions Writer(bool indented) =>
        new() { Indented = indented, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping };

    // The metadata of the transfer types comes from the source generator (TransferJsonContext), not from reflection
    // at run time: the first document is written without the serializer's reflection warm-up, which cost a
    // command about a quarter of a second of start-up.
    private static JsonSerializerOptions Create()
    {
        var options = new JsonSerializerOptions(TransferJsonContext.Default.Options)
        {
            Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping,
        };
        options.MakeReadOnly();
        return options;
    }

    /// <summary>Numbers: finite as the shortest round-trip form, otherwise null; null reads as NaN.</summary>
    /// <remarks>
    /// Reading also accepts the strings "NaN", "Infinity" and "-Infinity", which run lines of layout
    /// <c>nffit-run/1</c> used for non-finite numbers.
    /// </remarks>
    internal sealed class FiniteOrNull : JsonConverter<double>
    {
        public override bool HandleNull => true;

        public override double Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options) => reader.TokenType switch
        {
            JsonTokenType.Number => reader.GetDouble(),
            JsonTokenType.Null => double.NaN,
            JsonTokenType.String => reader.GetString() switch
            {
                "NaN" => double.NaN,
                "Infinity" => double.PositiveInfinity,
                "-Infinity" => double.NegativeInfinity,
                var other => throw new JsonException($"'{other}' is not a number"),
            },
            _ => throw new JsonException($"expected a number, found {reader.TokenType}"),
        };

        public override void Write(Utf8JsonWriter writer, double value, JsonSerializerOptions options)
        {
            if (double.IsFinite(value))
            {
                writer.WriteNumberValue(value);
            }
            else
            {
                writer.WriteNullValue();
            }
        }
    }
}

/// <summary>Serialisation metadata of the transfer types, generated at build time with the convention above.</summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.SnakeCaseLower,
    RespectNullableAnnotations = true,
    Converters = [typeof(JsonConventions.FiniteOrNull)])]
[JsonSerializable(typeof(ReportDto))]
[JsonSerializable(typeof(ComparisonDocumentDto))]
[JsonSerializable(typeof(RunLineDto))]
[JsonSerializable(typeof(RunLineV1Dto))]
internal sealed partial class TransferJsonContext : JsonSerializerContext;
