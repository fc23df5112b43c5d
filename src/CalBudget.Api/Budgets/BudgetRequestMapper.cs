using CalBudget.Api.Hosting;
using CalBudget.Core;
using CalBudget.Core.Gum;

namespace CalBudget.Api.Budgets;

/// <summary>Checks an <see cref="EvaluateRequest"/> field by field and builds the Core budget from it.</summary>
public static class BudgetRequestMapper
{
    /// <summary>The most contributions one budget may have.</summary>
    public const int MaxContributions = 500;

    /// <summary>The distribution names of the contract and their Core kinds.</summary>
    public static IReadOnlyDictionary<string, DistributionKind> DistributionNames { get; } = new Dictionary<string, DistributionKind>(StringComparer.Ordinal)
    {
        ["normal"] = DistributionKind.Normal,
        ["rectangular"] = DistributionKind.Rectangular,
        ["triangular"] = DistributionKind.Triangular,
        ["u-shaped"] = DistributionKind.UShaped,
        ["student-t"] = DistributionKind.StudentT,
    };

    /// <summary>
    /// The budget, or null with <paramref name="errors"/> saying why not. A budget whose fields are all valid but which
    /// cannot hold together (a correlation matrix that is not positive semidefinite) throws the not-computable
    /// <see cref="MetrologyException"/>, for a 422.
    /// </summary>
    public static UncertaintyBudget? TryMap(EvaluateRequest request, FieldErrors errors)
    {
        ArgumentNullException.ThrowIfNull(request);
        ArgumentNullException.ThrowIfNull(errors);
        string measurand = errors.Text(request.Measurand, "measurand", 200, required: false) ?? "fractional frequency offset";
        double p = request.CoverageProbability ?? UncertaintyBudget.DefaultCoverageProbability;
        if (!double.IsFinite(p) || p <= 0 || p >= 1)
        {
            errors.Add("coverageProbability", "Must lie strictly between 0 and 1.");
        }

        var contributions = new List<Contribution>();
        if (request.Contributions is null || request.Contributions.Count == 0)
        {
            errors.Add("contributions", "At least one contribution is required.");
        }
        else if (request.Contributions.Count > MaxContributions)
        {
            errors.Add("contributions", $"At most {MaxContributions} contributions.");
        }
        else
        {
            var names = new HashSet<string>(StringComparer.Ordinal);
            for (int i = 0; i < request.Contributions.Count; i++)
            {
                var c = MapContribution(request.Contributions[i], $"contributions[{i}]", errors);
                if (c is not null && !names.Add(c.Name))
                {
                    errors.Add($"contributions[{i}].name", $"The name '{c.Name}' is used by an earlier contribution.");
                }
                else if (c is not null)
                {
                    contributions.Add(c);
                }
            }
        }

        var correlations = new List<Correlation>();
        for (int i = 0; i < (request.Correlations?.Count ?? 0); i++)
        {
            var r = request.Correlations![i];
            string at = $"correlations[{i}]";
            if (r is null)
            {
                errors.Add(at, "Required.");
                continue;
            }

            if (r.Between is not { Count: 2 } || r.Between.Any(string.IsNullOrWhiteSpace))
            {
                errors.Add($"{at}.between", "Name exactly two contributions.");
                continue;
            }

            if (r.Coefficient is not double coefficient)
            {
                errors.Add($"{at}.coefficient", "Required.");
                continue;
            }

            if (Guard(() => correlations.Add(Correlation.Between(r.Between[0], r.Between[1], coefficient)), at, errors) is false)
            {
                continue;
            }
        }

        if (!errors.IsEmpty)
        {
            return null;
        }

        UncertaintyBudget? budget = null;
        return Guard(() => budget = UncertaintyBudget.Create(contributions, correlations, p, measurand), "", errors) ? budget : null;
    }

    private static Contribution? MapContribution(ContributionRequest? c, string at, FieldErrors errors)
    {
        if (c is null)
        {
            errors.Add(at, "Required.");
            return null;
        }

        int before = errors.Count;
        string? name = errors.Text(c.Name, $"{at}.name", 200);
        double estimate = errors.Finite(c.Estimate, $"{at}.estimate") ?? 0;
        double sensitivity = errors.Finite(c.Sensitivity, $"{at}.sensitivity") ?? 1;
        double? u = errors.NonNegative(c.StandardUncertainty, $"{at}.standardUncertainty");
        double? expanded = errors.NonNegative(c.ExpandedUncertainty, $"{at}.expandedUncertainty");
        double? k = errors.Positive(c.CoverageFactor, $"{at}.coverageFactor");
        double? a = errors.NonNegative(c.HalfWidth, $"{at}.halfWidth");
        double? nu = errors.Positive(c.DegreesOfFreedom, $"{at}.degreesOfFreedom");
        EvaluationType type = c.Type switch
        {
            null or "B" => EvaluationType.B,
            "A" => EvaluationType.A,
            _ => Refuse(errors, $"{at}.type", "Must be \"A\" or \"B\".", EvaluationType.B),
        };

        InputDistribution? distribution = null;
        if (c.Distribution is null)
        {
            errors.Add($"{at}.distribution", $"Required: one of {string.Join(", ", DistributionNames.Keys)}.");
        }
        else if (!DistributionNames.TryGetValue(c.Distribution, out var kind))
        {
            errors.Add($"{at}.distribution", $"Unknown distribution '{c.Distribution}': use one of {string.Join(", ", DistributionNames.Keys)}.");
        }
        else
        {
            distribution = MapDistribution(kind, c, u, expanded, k, a, nu, at, errors);
        }

        if (errors.Count != before || name is null || distribution is null)
        {
            return null;
        }

        Contribution? result = null;
        Guard(() => result = Contribution.Create(name, distribution, estimate, sensitivity, type, nu), at, errors);
        return result;
    }

    private static InputDistribution? MapDistribution(DistributionKind kind, ContributionRequest c, double? u, double? expanded, double? k,
        double? a, double? nu, string at, FieldErrors errors)
    {
        void NotFor(string field, bool present)
        {
            if (present)
            {
                errors.Add($"{at}.{field}", $"Does not apply to a {c.Distribution} distribution.");
            }
        }

        switch (kind)
        {
            case DistributionKind.Normal:
                NotFor("halfWidth", c.HalfWidth is not null);
                if (c.StandardUncertainty is not null && c.ExpandedUncertainty is not null)
                {
                    errors.Add($"{at}.standardUncertainty", "Give standardUncertainty or expandedUncertainty, not both.");
                    return null;
                }

                if (c.ExpandedUncertainty is not null)
                {
                    if (c.CoverageFactor is null)
                    {
                        errors.Add($"{at}.coverageFactor", "Required with expandedUncertainty.");
                    }

                    return expanded is double big && k is double factor ? InputDistribution.NormalFromExpanded(big, factor) : null;
                }

                NotFor("coverageFactor", c.CoverageFactor is not null);
                if (c.StandardUncertainty is null)
                {
                    errors.Add($"{at}.standardUncertainty", "Required: give standardUncertainty, or expandedUncertainty with coverageFactor.");
                }

                return u is double su ? InputDistribution.NormalFromStandard(su) : null;

            case DistributionKind.StudentT:
                NotFor("halfWidth", c.HalfWidth is not null);
                NotFor("expandedUncertainty", c.ExpandedUncertainty is not null);
                NotFor("coverageFactor", c.CoverageFactor is not null);
                if (c.StandardUncertainty is null)
                {
                    errors.Add($"{at}.standardUncertainty", "Required for student-t (the scale of the distribution).");
                }

                if (c.DegreesOfFreedom is null)
                {
                    errors.Add($"{at}.degreesOfFreedom", "Required for student-t.");
                }

                return u is double s && nu is double dof ? InputDistribution.StudentT(s, dof) : null;

            default:
                NotFor("expandedUncertainty", c.ExpandedUncertainty is not null);
                NotFor("coverageFactor", c.CoverageFactor is not null);
                if (c.HalfWidth is not null && c.StandardUncertainty is not null)
                {
                    errors.Add($"{at}.halfWidth", "Give halfWidth or standardUncertainty, not both.");
                    return null;
                }

                if (c.HalfWidth is null && c.StandardUncertainty is null)
                {
                    errors.Add($"{at}.halfWidth", "Required: give halfWidth or standardUncertainty.");
                    return null;
                }

                return (a, u) switch
                {
                    (double half, _) => kind switch
                    {
                        DistributionKind.Rectangular => InputDistribution.Rectangular(half),
                        DistributionKind.Triangular => InputDistribution.Triangular(half),
                        _ => InputDistribution.UShaped(half),
                    },
                    (_, double standard) => InputDistribution.BoundedFromStandard(kind, standard),
                    _ => null,
                };
        }
    }

    private static T Refuse<T>(FieldErrors errors, string field, string message, T fallback)
    {
        errors.Add(field, message);
        return fallback;
    }

    // Core refuses what slipped past the field checks; its parameter name is put under the request path.
    private static bool Guard(Action action, string at, FieldErrors errors)
    {
        try
        {
            action();
            return true;
        }
        catch (MetrologyException ex) when (!ex.NotComputable)
        {
            errors.Add(ex.Parameter.StartsWith("contributions", StringComparison.Ordinal) || ex.Parameter.StartsWith("correlations", StringComparison.Ordinal) || at.Length == 0
                ? ex.Parameter
                : $"{at}.{ex.Parameter}", ex.Message);
            return false;
        }
    }
}
