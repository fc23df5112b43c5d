namespace CalBudget.Core.Gum;

/// <summary>The GUM (JCGM 100:2008) evaluation of a budget.</summary>
/// <param name="Estimate">y = sum(c_i x_i).</param>
/// <param name="CombinedStandardUncertainty">u_c(y), including correlation terms (eq. 13).</param>
/// <param name="EffectiveDegreesOfFreedom">Welch-Satterthwaite nu_eff (eq. G.2b), unrounded; +infinity when every input has infinite degrees of freedom.</param>
/// <param name="CoverageFactor">k_p = t_p(floor(nu_eff)), two-sided (G.4.1).</param>
/// <param name="ExpandedUncertainty">U = k_p u_c(y).</param>
/// <param name="CoverageProbability">The coverage probability p.</param>
/// <param name="Contributions">Each input's share, in budget order.</param>
public sealed record GumResult(
    double Estimate,
    double CombinedStandardUncertainty,
    double EffectiveDegreesOfFreedom,
    double CoverageFactor,
    double ExpandedUncertainty,
    double CoverageProbability,
    IReadOnlyList<ContributionResult> Contributions);

/// <summary>One input's line in the evaluated budget.</summary>
/// <param name="Name">The input's name.</param>
/// <param name="StandardUncertainty">u(x_i).</param>
/// <param name="Sensitivity">c_i.</param>
/// <param name="Contribution">|c_i| u(x_i).</param>
/// <param name="VarianceShare">(c_i u(x_i))^2 / u_c^2, ignoring correlation terms.</param>
public sealed record ContributionResult(string Name, double StandardUncertainty, double Sensitivity, double Contribution, double VarianceShare);
