using MathNet.Numerics.LinearAlgebra;

namespace CalBudget.Core.Gum;

/// <summary>
/// The symmetric correlation matrix of a budget's inputs, checked to be positive semidefinite
/// (a matrix that is not cannot describe any joint distribution, and would let u_c^2 go negative).
/// </summary>
public sealed class CorrelationMatrix
{
    // Eigenvalues down to this far below zero are rounding, not indefiniteness.
    private const double SemidefiniteTolerance = 1e-10;
    private readonly double[,] _r;

    private CorrelationMatrix(double[,] r, IReadOnlyList<(int I, int J, double R)> offDiagonal, IReadOnlyList<int> correlatedIndices)
    {
        _r = r;
        OffDiagonal = offDiagonal;
        CorrelatedIndices = correlatedIndices;
    }

    /// <summary>The number of inputs.</summary>
    public int Size => _r.GetLength(0);

    /// <summary>The stated non-zero coefficients as (i, j, r) with i &lt; j.</summary>
    public IReadOnlyList<(int I, int J, double R)> OffDiagonal { get; }

    /// <summary>Indices of the inputs that take part in at least one non-zero correlation, ascending.</summary>
    public IReadOnlyList<int> CorrelatedIndices { get; }

    /// <summary>r(i, j).</summary>
    public double this[int i, int j] => _r[i, j];

    /// <summary>Builds the matrix for <paramref name="names"/> from the stated pairs; unstated pairs are uncorrelated.</summary>
    public static CorrelationMatrix Create(IReadOnlyList<string> names, IReadOnlyList<Correlation> correlations, IReadOnlyList<DistributionKind>? kinds = null)
    {
        ArgumentNullException.ThrowIfNull(names);
        ArgumentNullException.ThrowIfNull(correlations);
        int n = names.Count;
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int i = 0; i < n; i++)
        {
            index[names[i]] = i;
        }

        var r = new double[n, n];
        for (int i = 0; i < n; i++)
        {
            r[i, i] = 1;
        }

        var stated = new HashSet<(int, int)>();
        var offDiagonal = new List<(int, int, double)>();
        for (int p = 0; p < correlations.Count; p++)
        {
            var c = correlations[p];
            if (!index.TryGetValue(c.First, out int i))
            {
                throw new MetrologyException($"correlations[{p}].between", $"No contribution is named '{c.First}'.");
            }

            if (!index.TryGetValue(c.Second, out int j))
            {
                throw new MetrologyException($"correlations[{p}].between", $"No contribution is named '{c.Second}'.");
            }

            (i, j) = (Math.Min(i, j), Math.Max(i, j));
            if (!stated.Add((i, j)))
            {
                throw new MetrologyException($"correlations[{p}].between", $"The pair '{c.First}', '{c.Second}' is stated twice.");
            }

            r[i, j] = r[j, i] = c.Coefficient;
            if (c.Coefficient != 0)
            {
                offDiagonal.Add((i, j, c.Coefficient));
            }
        }

        var correlated = offDiagonal.SelectMany(t => new[] { t.Item1, t.Item2 }).Distinct().Order().ToArray();
        foreach (int i in correlated)
        {
            if (kinds is not null && kinds[i] == DistributionKind.Orientation)
            {
                throw new MetrologyException("correlations", $"'{names[i]}' is an orientation contribution: its distribution comes from the geometry and cannot be correlated here.") { NotComputable = true };
            }
        }

        var matrix = new CorrelationMatrix(r, offDiagonal, correlated);
        if (correlated.Length > 2)
        {
            double smallest = matrix.Submatrix(correlated).Evd(Symmetricity.Symmetric).EigenValues.Min(e => e.Real);
            if (smallest < -SemidefiniteTolerance)
            {
                throw new MetrologyException("correlations",
                    $"The correlation matrix is not positive semidefinite (smallest eigenvalue {smallest:G3}): these coefficients cannot hold together.")
                { NotComputable = true };
            }
        }

        return matrix;
    }

    /// <summary>
    /// A factor F of the submatrix of <paramref name="indices"/> with F F^T = R, from its symmetric eigendecomposition
    /// (F = V sqrt(Lambda)); unlike a Cholesky factor it exists for singular (semidefinite) matrices too.
    /// </summary>
    public double[,] Factor(IReadOnlyList<int> indices)
    {
        ArgumentNullException.ThrowIfNull(indices);
        var evd = Submatrix(indices).Evd(Symmetricity.Symmetric);
        int k = indices.Count;
        var f = new double[k, k];
        for (int col = 0; col < k; col++)
        {
            double s = Math.Sqrt(Math.Max(evd.EigenValues[col].Real, 0));
            for (int row = 0; row < k; row++)
            {
                f[row, col] = evd.EigenVectors[row, col] * s;
            }
        }

        return f;
    }

    private Matrix<double> Submatrix(IReadOnlyList<int> indices) =>
        Matrix<double>.Build.Dense(indices.Count, indices.Count, (a, b) => _r[indices[a], indices[b]]);
}
