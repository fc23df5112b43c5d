using MathNet.Numerics.Distributions;

namespace CalBudget.Core.Conformity;

/// <summary>The decision rules of ILAC-G8:09/2019.</summary>
public enum DecisionRuleKind
{
    /// <summary>Simple acceptance (ILAC-G8 4.2.1): pass when the measured value lies within the tolerance, limits included.</summary>
    SimpleAcceptance,
    /// <summary>Guard-banded acceptance (ILAC-G8 4.2.2): pass when the value lies within the tolerance narrowed by w on each side.</summary>
    GuardBand,
    /// <summary>The non-binary statement (ILAC-G8 4.2.3): pass, conditional pass, conditional fail, fail, with w = U.</summary>
    NonBinary,
}

/// <summary>What the rule says of the result.</summary>
public enum ConformityOutcome
{
    /// <summary>Conforms.</summary>
    Pass,
    /// <summary>The value is within the tolerance, but the interval y +/- w reaches beyond it (non-binary rule only).</summary>
    ConditionalPass,
    /// <summary>The value is outside the tolerance, but the interval y +/- w reaches into it (non-binary rule only).</summary>
    ConditionalFail,
    /// <summary>Does not conform.</summary>
    Fail,
}

/// <summary>A decision rule: its kind and, for a guard band, w as a multiple r of U (w = r U, r &gt;= 0; ILAC-G8 4.2.2 takes r = 1).</summary>
public sealed record DecisionRule
{
    private DecisionRule(DecisionRuleKind kind, double guardBandMultiple)
    {
        Kind = kind;
        GuardBandMultiple = guardBandMultiple;
    }

    /// <summary>The rule.</summary>
    public DecisionRuleKind Kind { get; }

    /// <summary>r in w = r U: 0 for simple acceptance, 1 for the non-binary statement, as given for a guard band.</summary>
    public double GuardBandMultiple { get; }

    /// <summary>Simple acceptance, w = 0.</summary>
    public static DecisionRule SimpleAcceptance { get; } = new(DecisionRuleKind.SimpleAcceptance, 0);

    /// <summary>The non-binary statement, w = U.</summary>
    public static DecisionRule NonBinary { get; } = new(DecisionRuleKind.NonBinary, 1);

    /// <summary>A guard band w = <paramref name="multiple"/> x U (finite, &gt;= 0; 1 is ILAC-G8's w = U).</summary>
    public static DecisionRule GuardBand(double multiple) =>
        double.IsFinite(multiple) && multiple >= 0
            ? new DecisionRule(DecisionRuleKind.GuardBand, multiple)
            : throw new MetrologyException("decisionRule.guardBandMultiple", "Must be a finite number >= 0.");
}

/// <summary>A decision with the numbers behind it.</summary>
/// <param name="Outcome">What the rule says.</param>
/// <param name="GuardBand">w, the guard band used (0 for simple acceptance).</param>
/// <param name="AcceptanceLower">T_L + w, or null for no lower limit.</param>
/// <param name="AcceptanceUpper">T_U - w, or null for no upper limit.</param>
/// <param name="ProbabilityOfConformity">p_c of JCGM 106:2012 (eq. 9 and its one-sided forms) for a normal result, or a scaled t when degrees of freedom were given.</param>
/// <param name="TestUncertaintyRatio">(T_U - T_L) / (2 U) for two-sided limits (cal-lab practice); null for one limit.</param>
public sealed record ConformityDecision(ConformityOutcome Outcome, double GuardBand, double? AcceptanceLower, double? AcceptanceUpper,
    double ProbabilityOfConformity, double? TestUncertaintyRatio);

/// <summary>Conformity of a measured value y with expanded uncertainty U (k from its budget) to a tolerance.</summary>
public static class ConformityAssessment
{
    /// <summary>
    /// Decides by <paramref name="rule"/>. Limits are inclusive: a value exactly at an acceptance limit passes; under the
    /// non-binary rule a value exactly at a tolerance limit is a conditional pass, exactly at T_U + U (or T_L - U) a
    /// conditional fail (the interval y +/- U touches the tolerance), beyond it a fail.
    /// </summary>
    /// <param name="y">The measured value.</param>
    /// <param name="standardUncertainty">u(y), finite and &gt; 0, for the probability of conformity.</param>
    /// <param name="expandedUncertainty">U = k u(y), finite and &gt; 0.</param>
    /// <param name="limits">The tolerance.</param>
    /// <param name="rule">The decision rule.</param>
    /// <param name="degreesOfFreedom">nu_eff of the result: p_c then comes from the scaled t-distribution the stated interval is drawn from; null or infinite: normal.</param>
    public static ConformityDecision Decide(double y, double standardUncertainty, double expandedUncertainty, ToleranceLimits limits, DecisionRule rule,
        double? degreesOfFreedom = null)
    {
        ArgumentNullException.ThrowIfNull(limits);
        ArgumentNullException.ThrowIfNull(rule);
        if (!double.IsFinite(y))
        {
            throw new MetrologyException("estimate", "The measured value must be finite.");
        }

        if (!double.IsFinite(expandedUncertainty) || expandedUncertainty <= 0)
        {
            throw new MetrologyException("expandedUncertainty", "Must be a finite number > 0.");
        }

        double w = rule.GuardBandMultiple * expandedUncertainty;
        double? acceptLow = limits.Lower + w;
        double? acceptHigh = limits.Upper - w;
        bool withinAcceptance = (acceptLow is not { } al || y >= al) && (acceptHigh is not { } ah || y <= ah);
        ConformityOutcome outcome;
        if (rule.Kind == DecisionRuleKind.NonBinary)
        {
            bool reachesTolerance = (limits.Lower is not { } l || y + w >= l) && (limits.Upper is not { } u || y - w <= u);
            outcome = withinAcceptance ? ConformityOutcome.Pass
                : limits.Contains(y) ? ConformityOutcome.ConditionalPass
                : reachesTolerance ? ConformityOutcome.ConditionalFail
                : ConformityOutcome.Fail;
        }
        else
        {
            outcome = withinAcceptance ? ConformityOutcome.Pass : ConformityOutcome.Fail;
        }

        double? tur = limits.IsTwoSided ? (limits.Upper!.Value - limits.Lower!.Value) / (2 * expandedUncertainty) : null;
        double pc = degreesOfFreedom is double nu && double.IsFinite(nu)
            ? ProbabilityOfConformity(y, standardUncertainty, nu, limits)
            : ProbabilityOfConformity(y, standardUncertainty, limits);
        return new ConformityDecision(outcome, w, acceptLow, acceptHigh, pc, tur);
    }

    /// <summary>
    /// p_c = Phi((T_U - y)/u) - Phi((T_L - y)/u) for a normal result (JCGM 106:2012 eq. 9); a missing limit is infinite.
    /// Computed from the upper tails where they are small so that values near 1 keep their digits.
    /// </summary>
    public static double ProbabilityOfConformity(double y, double standardUncertainty, ToleranceLimits limits)
    {
        ArgumentNullException.ThrowIfNull(limits);
        if (!double.IsFinite(standardUncertainty) || standardUncertainty <= 0)
        {
            throw new MetrologyException("standardUncertainty", "Must be a finite number > 0.");
        }

        // p_c = 1 - P(Y < T_L) - P(Y > T_U), each tail from the complementary function.
        double below = limits.Lower is { } l ? Normal.CDF(0, 1, (l - y) / standardUncertainty) : 0;
        double above = limits.Upper is { } u ? Normal.CDF(0, 1, (y - u) / standardUncertainty) : 0;
        return Math.Clamp(1 - below - above, 0, 1);
    }

    /// <summary>
    /// p_c for a result whose distribution is the scaled and shifted t with <paramref name="degreesOfFreedom"/> (JCGM 100
    /// G.3; the distribution the stated coverage interval y +/- k u comes from): p_c = T_nu((T_U - y)/u) - T_nu((T_L - y)/u).
    /// </summary>
    public static double ProbabilityOfConformity(double y, double scale, double degreesOfFreedom, ToleranceLimits limits)
    {
        ArgumentNullException.ThrowIfNull(limits);
        if (!double.IsFinite(scale) || scale <= 0)
        {
            throw new MetrologyException("standardUncertainty", "Must be a finite number > 0.");
        }

        if (double.IsNaN(degreesOfFreedom) || degreesOfFreedom <= 0)
        {
            throw new MetrologyException("degreesOfFreedom", "Must be > 0.");
        }

        double below = limits.Lower is { } l ? StudentT.CDF(0, 1, degreesOfFreedom, (l - y) / scale) : 0;
        double above = limits.Upper is { } u ? StudentT.CDF(0, 1, degreesOfFreedom, (y - u) / scale) : 0;
        return Math.Clamp(1 - below - above, 0, 1);
    }

    /// <summary>The words of an outcome for a statement.</summary>
    public static string Words(ConformityOutcome outcome) => outcome switch
    {
        ConformityOutcome.Pass => "pass",
        ConformityOutcome.ConditionalPass => "conditional pass",
        ConformityOutcome.ConditionalFail => "conditional fail",
        _ => "fail",
    };
}
