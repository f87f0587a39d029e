using System.ComponentModel;
using System.Globalization;
using SummaryService.Readable;

namespace SummaryService.Server.Configuration;

/// <summary>
/// A duration in configuration, written in the syntax people use everywhere else (<c>90s</c>,
/// <c>1h30m</c>, <c>7d</c>, <c>5ms</c>); the .NET form (<c>00:01:30</c>, <c>7.00:00:00</c>) is still
/// accepted so existing files keep working. Printed back in the first form, so a start-up error
/// names the value the way the file should say it.
/// </summary>
/// <remarks>
/// A type of our own carries the converter because the configuration binder reads plain
/// <see cref="TimeSpan"/> through the framework's converter, which knows only the .NET form;
/// changing that converter would mean process-wide state.
/// </remarks>
/// <param name="Value">The duration.</param>
[TypeConverter(typeof(DurationSettingConverter))]
public readonly record struct DurationSetting(TimeSpan Value)
{
    /// <summary>The duration itself, so settings read like the <see cref="TimeSpan"/> they hold.</summary>
    public static implicit operator TimeSpan(DurationSetting setting) => setting.Value;

    /// <summary>A setting holding <paramref name="value"/>, so defaults read as plain durations.</summary>
    public static implicit operator DurationSetting(TimeSpan value) => new(value);

    /// <summary>Reads either form; false with a message naming both when neither fits.</summary>
    public static bool TryParse(string text, out DurationSetting setting, out string error)
    {
        ArgumentNullException.ThrowIfNull(text);
        setting = default;
        if (DurationText.TryParse(text, out TimeSpan value, out error, allowZero: true))
        {
            setting = value;
            return true;
        }

        if (text.Contains(':', StringComparison.Ordinal) && TimeSpan.TryParse(text, CultureInfo.InvariantCulture, out value))
        {
            setting = value;
            error = "";
            return true;
        }

        error = $"'{text}' is not a duration; write it like 90s, 15m, 6h, 7d or 1h30m (or the .NET form 00:01:30).";
        return false;
    }

    /// <inheritdoc/>
    public override string ToString() => DurationText.Format(Value);
}

/// <summary>Lets the configuration binder read <see cref="DurationSetting"/> from text.</summary>
public sealed class DurationSettingConverter : TypeConverter
{
    /// <inheritdoc/>
    public override bool CanConvertFrom(ITypeDescriptorContext? context, Type sourceType) => sourceType == typeof(string) || base.CanConvertFrom(context, sourceType);

    /// <inheritdoc/>
    public override object? ConvertFrom(ITypeDescriptorContext? context, CultureInfo? culture, object value) =>
        value is string text
            ? DurationSetting.TryParse(text, out DurationSetting setting, out string error) ? setting : throw new FormatException(error)
            : base.ConvertFrom(context, culture, value);
}
