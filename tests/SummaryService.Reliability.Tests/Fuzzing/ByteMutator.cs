namespace SummaryService.Reliability.Tests.Fuzzing;

/// <summary>
/// Damages serialized messages the ways a broken client, a bad proxy or an attacker would: flipped
/// bits, overwritten and inserted bytes, cut and repeated ranges, splices of two messages, runs of
/// 0xFF (varints that never end), stray fields of every wire type, and plain noise.
/// </summary>
internal sealed class ByteMutator(Random random)
{
    /// <summary>One to three mutations of <paramref name="original"/>; <paramref name="other"/> is a second message to splice from.</summary>
    public byte[] Mutate(byte[] original, byte[] other)
    {
        var bytes = new List<byte>(original);
        int rounds = random.Next(1, 4);
        for (int round = 0; round < rounds; round++)
        {
            Apply(bytes, other);
        }

        return [.. bytes];
    }

    /// <summary>Uniform noise of a random length up to <paramref name="maxLength"/>.</summary>
    public byte[] Noise(int maxLength)
    {
        var bytes = new byte[random.Next(0, maxLength + 1)];
        random.NextBytes(bytes);
        return bytes;
    }

    private void Apply(List<byte> bytes, byte[] other)
    {
        int at = bytes.Count == 0 ? 0 : random.Next(bytes.Count);
        switch (random.Next(10))
        {
            case 0 when bytes.Count > 0:
                bytes[at] ^= (byte)(1 << random.Next(8));
                break;
            case 1 when bytes.Count > 0:
                bytes[at] = (byte)random.Next(256);
                break;
            case 2:
                bytes.InsertRange(at, Noise(8));
                break;
            case 3 when bytes.Count > 0:
                bytes.RemoveRange(at, Math.Min(bytes.Count - at, random.Next(1, 9)));
                break;
            case 4:
                bytes.RemoveRange(at, bytes.Count - at);
                break;
            case 5 when bytes.Count > 0:
                int length = Math.Min(bytes.Count - at, random.Next(1, 17));
                bytes.InsertRange(random.Next(bytes.Count + 1), bytes.GetRange(at, length));
                break;
            case 6 when other.Length > 0:
                int from = random.Next(other.Length);
                bytes.RemoveRange(at, bytes.Count - at);
                bytes.AddRange(other[from..]);
                break;
            case 7:
                bytes.InsertRange(at, Enumerable.Repeat((byte)0xFF, random.Next(1, 12)));
                break;
            case 8:
                bytes.InsertRange(at, StrayField());
                break;
            default:
                if (bytes.Count > 0)
                {
                    bytes[at] = (byte)(bytes[at] & 0xF8 | random.Next(8)); // same field number, another (maybe invalid) wire type
                }

                break;
        }
    }

    // A tag with a random field number and wire type, followed by a few bytes of body.
    private byte[] StrayField()
    {
        int tag = (random.Next(1, 40) << 3) | random.Next(8);
        var field = new List<byte>();
        while (tag >= 0x80)
        {
            field.Add((byte)(tag | 0x80));
            tag >>= 7;
        }

        field.Add((byte)tag);
        field.AddRange(Noise(10));
        return [.. field];
    }
}
