namespace SummaryService.Sketches.Buckets;

/// <summary>
/// The base of a local maximum of a curve (topographic prominence): on each side, the lowest point
/// before higher ground — or before the end — and of those two the higher.
/// </summary>
/// <remarks>
/// A side with no higher ground is read from running minima and maxima kept from each end, so a
/// small maximum in a long falling tail costs O(1) instead of a walk to the end; a side with higher
/// ground is walked up to it. Ties go where a walk outward from the maximum would put them: the
/// first strictly lower point met.
/// </remarks>
internal readonly ref struct PeakBases
{
    private readonly ReadOnlySpan<double> _curve;
    private readonly Span<double> _maxBefore;
    private readonly Span<double> _maxAfter;
    private readonly Span<int> _lowestBefore;
    private readonly Span<int> _lowestAfter;

    /// <summary>Reads <paramref name="curve"/>, using the four work spans (each as long as the curve).</summary>
    public PeakBases(ReadOnlySpan<double> curve, Span<double> maxBefore, Span<double> maxAfter, Span<int> lowestBefore, Span<int> lowestAfter)
    {
        _curve = curve;
        _maxBefore = maxBefore;
        _maxAfter = maxAfter;
        _lowestBefore = lowestBefore;
        _lowestAfter = lowestAfter;
        int n = curve.Length;
        for (int i = 0; i < n; i++)
        {
            // Over [0, i]: the largest value, and the lowest point nearest to i.
            bool first = i == 0;
            _maxBefore[i] = first ? curve[i] : Math.Max(_maxBefore[i - 1], curve[i]);
            _lowestBefore[i] = first || curve[i] <= curve[_lowestBefore[i - 1]] ? i : _lowestBefore[i - 1];
        }

        for (int i = n - 1; i >= 0; i--)
        {
            // Over [i, n − 1]: the largest value, and the lowest point nearest to i.
            bool last = i == n - 1;
            _maxAfter[i] = last ? curve[i] : Math.Max(_maxAfter[i + 1], curve[i]);
            _lowestAfter[i] = last || curve[i] <= curve[_lowestAfter[i + 1]] ? i : _lowestAfter[i + 1];
        }
    }

    /// <summary>The base of the local maximum at <paramref name="k"/>.</summary>
    public int BaseOf(int k)
    {
        double top = _curve[k];
        int left = k;
        if (k > 0 && _maxBefore[k - 1] <= top)
        {
            left = _curve[_lowestBefore[k - 1]] < top ? _lowestBefore[k - 1] : k;
        }
        else
        {
            for (int i = k - 1; i >= 0 && _curve[i] <= top; i--)
            {
                left = _curve[i] < _curve[left] ? i : left;
            }
        }

        int right = k;
        if (k < _curve.Length - 1 && _maxAfter[k + 1] <= top)
        {
            right = _curve[_lowestAfter[k + 1]] < top ? _lowestAfter[k + 1] : k;
        }
        else
        {
            for (int i = k + 1; i < _curve.Length && _curve[i] <= top; i++)
            {
                right = _curve[i] < _curve[right] ? i : right;
            }
        }

        return _curve[left] >= _curve[right] ? left : right;
    }
}
