namespace CalBudget.Core.Gum;

/// <summary>
/// An uncertainty budget for the additive model Y = sum(c_i X_i) (the first-order form of JCGM 100:2008 5.1.2),
/// with optional correlations between inputs. Immutable; <see cref="Create"/> validates the whole budget.
/// </summary>
public sealed class UncertaintyBudget
{
    /// <summary>The default coverage probability, 95.45 % (k = 2 for infinite degrees of freedom).</summary>
    public const double DefaultCoverageProbability = 0.9545;

    private UncertaintyBudget(string measurand, double coverageProbability, IReadOnlyList<Contribution> contributions,
        CorrelationMatrix correlation)
    {
        Measurand = measurand;
        CoverageProbability = coverageProbability;
        Contributions = contributions;
        Correlation = correlation;
    }

    /// <summary>What is measured, in words (for example "fractional frequency offset").</summary>
    public string Measurand { get; }

    /// <summary>The coverage probability p in (0, 1) for the expanded uncertainty.</summary>
    public double CoverageProbability { get; }

    /// <summary>The inputs in the order given.</summary>
    public IReadOnlyList<Contribution> Contributions { get; }

    /// <summary>The full correlation matrix of the inputs (identity when none is stated).</summary>
    public CorrelationMatrix Correlation { get; }

    /// <summary>
    /// Validates and builds a budget: at least one contribution, unique names, correlations naming known inputs once each,
    /// and a positive semidefinite correlation matrix.
    /// </summary>
    public static UncertaintyBudget Create(IReadOnlyList<Contribution> contributions, IReadOnlyList<Correlation>? correlations = null,
        double coverageProbability = DefaultCoverageProbability, string measurand = "fractional frequency offset")
    {
        ArgumentNullException.ThrowIfNull(contributions);
        CoverageFactor.CheckProbability(coverageProbability);
        if (contributions.Count == 0)
        {
            throw new MetrologyException("contributions", "A budget needs at least one contribution.");
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < contributions.Count; i++)
        {
            if (!seen.Add(contributions[i].Name))
            {
                throw new MetrologyException($"contributions[{i}].name", $"The name '{contributions[i].Name}' is used twice.");
            }
        }

        var matrix = CorrelationMatrix.Create(contributions.Select(c => c.Name).ToArray(), correlations ?? [],
            contributions.Select(c => c.Distribution.Kind).ToArray());
        return new UncertaintyBudget(measurand, coverageProbability, contributions.ToArray(), matrix);
    }

    /// <summary>
    /// The GUM evaluation: combined standard uncertainty with correlation terms (JCGM 100 eq. 13), Welch-Satterthwaite
    /// effective degrees of freedom (eq. G.2b), the coverage factor from Student's t with nu_eff truncated (G.4.1), and U = k u_c.
    /// </summary>
    public GumResult Evaluate()
    {
        int n = Contributions.Count;
        var ci = new double[n];
        double estimate = 0;
        double variance = 0;
        for (int i = 0; i < n; i++)
        {
            ci[i] = Contributions[i].Sensitivity * Contributions[i].StandardUncertainty;
            estimate += Contributions[i].Sensitivity * Contributions[i].Estimate;
            variance += ci[i] * ci[i];
        }

        foreach (var (i, j, r) in Correlation.OffDiagonal)
        {
            variance += 2 * ci[i] * ci[j] * r;
        }

        // Strong negative correlations can leave a rounding residue just below zero.
        double uc = Math.Sqrt(Math.Max(variance, 0));
        if (!(uc > 0))
        {
            throw new MetrologyException("contributions", "The combined standard uncertainty is zero: no coverage interval can be stated.")
            { NotComputable = true };
        }

        double nuEff = WelchSatterthwaite(uc, ci);
        double k = CoverageFactor.ForEffectiveDegreesOfFreedom(CoverageProbability, nuEff);
        var rows = new ContributionResult[n];
        double uc2 = uc * uc;
        for (int i = 0; i < n; i++)
        {
            var c = Contributions[i];
            rows[i] = new ContributionResult(c.Name, c.StandardUncertainty, c.Sensitivity, Math.Abs(ci[i]), ci[i] * ci[i] / uc2);
        }

        return new GumResult(estimate, uc, nuEff, k, k * uc, CoverageProbability, rows);
    }

    // JCGM 100 eq. (G.2b): nu_eff = u_c^4 / sum(u_i(y)^4 / nu_i); infinite terms add nothing.
    private double WelchSatterthwaite(double uc, double[] ci)
    {
        double denominator = 0;
        for (int i = 0; i < ci.Length; i++)
        {
            double nu = Contributions[i].DegreesOfFreedom;
            if (!double.IsPositiveInfinity(nu))
            {
                double u2 = ci[i] * ci[i];
                denominator += u2 * u2 / nu;
            }
        }

        if (denominator == 0)
        {
            return double.PositiveInfinity;
        }

        double uc2 = uc * uc;
        return uc2 * uc2 / denominator;
    }
}
