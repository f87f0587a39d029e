using SummaryService.Sketches.Modes;

namespace SummaryService.Sketches.Tests.Modes;

/// <summary>
/// Once counting moves to the count-min table, the tracked candidates follow one rule after every
/// value: a tracked key takes its new estimate; an untracked key joins while there is room, or
/// when its estimate beats the lowest tracked count, replacing the weakest candidate (lowest
/// count, ties to the smallest key). The rule is this project's own; the model below states it
/// plainly and is checked value by value against the sketch.
/// </summary>
public class CandidateEvictionTests
{
    private const int Candidates = 8;

    [Theory]
    [InlineData(0.0, 61)]
    [InlineData(1.0, 62)]
    public void Candidates_follow_the_eviction_rule_after_every_value(double resolution, int seed)
    {
        // Resolution 0: distinct integers (keyed by their bits, so discrete data, which the count-min
        // form is for), so many candidates tie at the lowest count; resolution 1: repeated bins, so
        // tracked keys are raised as often as new ones arrive.
        var sketch = new ModeSketch(resolution, exactLimit: 16, width: 16, depth: 3, candidateLimit: Candidates);
        var rng = new Random(seed);
        SortedDictionary<long, long>? model = null;
        for (int i = 0; i < 20_000; i++)
        {
            double value = resolution == 0
                ? Math.Round(rng.NextDouble() * 400_000 * (1 + rng.NextDouble()))
                : Math.Round(rng.NextDouble() * 400 * (1 + rng.NextDouble()), 3);
            sketch.Add(value);
            if (sketch.IsExact)
            {
                continue;
            }

            long key = ModeKey.Of(value, resolution);
            if (model is null)
            {
                // The switch from exact counts ranks all keys afresh; the rule applies from there on.
                model = new SortedDictionary<long, long>(sketch.SortedCandidates().ToDictionary(c => c.Key, c => c.Count));
            }
            else
            {
                Apply(model, key, sketch.TableEstimate(key));
            }

            Assert.Equal(model.Select(e => (e.Key, e.Value)), sketch.SortedCandidates());
        }

        Assert.NotNull(model);
    }

    // After an update the key's estimate is its raised count: conservative update leaves at least
    // one of its cells exactly there.
    private static void Apply(SortedDictionary<long, long> candidates, long key, long estimate)
    {
        if (candidates.ContainsKey(key))
        {
            candidates[key] = estimate;
            return;
        }

        if (candidates.Count < Candidates)
        {
            candidates[key] = estimate;
            return;
        }

        long floor = candidates.Values.Min();
        if (estimate <= floor)
        {
            return;
        }

        long weakest = candidates.Where(c => c.Value == floor).Min(c => c.Key);
        candidates.Remove(weakest);
        candidates[key] = estimate;
    }
}
