using System.Runtime.Intrinsics.X86;

namespace SummaryService.Sketches.Tests.Support;

/// <summary>
/// A fact about a fast path that runs only with AVX2. On a processor without it the test is
/// reported as skipped, with the reason, rather than passing without checking anything; the
/// portable path it would be compared with is covered by the tests that run everywhere.
/// </summary>
public sealed class Avx2FactAttribute : FactAttribute
{
    public Avx2FactAttribute()
    {
        Skip = Avx2Requirement.SkipReason;
    }
}

/// <summary>As <see cref="Avx2FactAttribute"/>, for a theory.</summary>
public sealed class Avx2TheoryAttribute : TheoryAttribute
{
    public Avx2TheoryAttribute()
    {
        Skip = Avx2Requirement.SkipReason;
    }
}

internal static class Avx2Requirement
{
    /// <summary>Null where the processor has AVX2, else why the test cannot run here.</summary>
    public static string? SkipReason => Avx2.IsSupported
        ? null
        : "This processor has no AVX2, so the vector path under test never runs here (the portable path is checked by the other tests).";
}
