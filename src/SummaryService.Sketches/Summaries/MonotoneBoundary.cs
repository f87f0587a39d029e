namespace SummaryService.Sketches.Summaries;

/// <summary>
/// Finds where a monotone predicate over an interval of doubles turns from true to false: the
/// last point known to hold and the first known not to, no further apart than a resolution.
/// </summary>
/// <remarks>
/// <see cref="Near"/> starts at a guess and gallops outward (steps doubling from the resolution),
/// then bisects the bracket it found, so a boundary that lies close to the guess costs a few
/// evaluations instead of a bisection of the whole range.
/// </remarks>
internal static class MonotoneBoundary
{
    /// <summary>
    /// The boundary of <paramref name="before"/> — true up to some point of [<paramref name="low"/>,
    /// <paramref name="high"/>], false after it — as (last true, first false) at most
    /// <paramref name="resolution"/> apart (or adjacent doubles). When it holds nowhere the answer
    /// is (low, low); when it holds everywhere, (high, high).
    /// </summary>
    public static (double LastTrue, double FirstFalse) Near(Func<double, bool> before, double low, double high, double guess, double resolution)
    {
        double step = Math.Max(resolution, double.Epsilon);
        double at = Math.Clamp(guess, low, high);
        double lastTrue;
        double firstFalse;
        if (before(at))
        {
            lastTrue = at;
            for (double d = step; ; d *= 2)
            {
                double next = lastTrue + d;
                if (next >= high)
                {
                    if (before(high))
                    {
                        return (high, high);
                    }

                    firstFalse = high;
                    break;
                }

                if (!before(next))
                {
                    firstFalse = next;
                    break;
                }

                lastTrue = next;
            }
        }
        else
        {
            firstFalse = at;
            for (double d = step; ; d *= 2)
            {
                double next = firstFalse - d;
                if (next <= low)
                {
                    if (!before(low))
                    {
                        return (low, low);
                    }

                    lastTrue = low;
                    break;
                }

                if (before(next))
                {
                    lastTrue = next;
                    break;
                }

                firstFalse = next;
            }
        }

        return Bisect(before, lastTrue, firstFalse, resolution, int.MaxValue);
    }

    /// <summary>
    /// Halves [<paramref name="lastTrue"/>, <paramref name="firstFalse"/>] at most
    /// <paramref name="maxSteps"/> times, until it is no wider than <paramref name="resolution"/>
    /// or no double lies strictly inside.
    /// </summary>
    public static (double LastTrue, double FirstFalse) Bisect(Func<double, bool> before, double lastTrue, double firstFalse, double resolution, int maxSteps)
    {
        for (int step = 0; step < maxSteps && firstFalse - lastTrue > resolution; step++)
        {
            double mid = lastTrue + ((firstFalse - lastTrue) / 2);
            if (mid <= lastTrue || mid >= firstFalse)
            {
                break;
            }

            if (before(mid))
            {
                lastTrue = mid;
            }
            else
            {
                firstFalse = mid;
            }
        }

        return (lastTrue, firstFalse);
    }
}
