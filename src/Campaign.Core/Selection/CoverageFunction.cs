namespace Campaign.Core.Selection;

/// <summary>
/// The facility-location coverage of a set of demand points (the candidates, with weights w_i):
/// f(S) = sum_i w_i max_{j in S or Existing} k(i, j) / sum_i w_i, with k(a, b) = exp(-|a - b|^2 / 2) in scaled
/// coordinates. Monotone and submodular. Keeps, for each demand point, the best similarity reached so far, so
/// gains are computed by recomputation (no n x n matrix is stored). Similarities below 1e-4 (distance above
/// sqrt(2 ln 10^4) = 4.29 scale units) count as 0, so f differs from the untruncated sum by less than 1e-4.
/// </summary>
public sealed class CoverageFunction
{
    /// <summary>Squared distance beyond which the similarity is taken as 0: 2 ln 10^4, where k = 1e-4.</summary>
    public static readonly double CutoffSquared = 2 * Math.Log(1e4);

    private readonly double[][] _points;
    private readonly double[] _weights;
    private readonly double[] _best;

    /// <summary>Creates the function over demand points with weights (normalised to sum 1), starting from <paramref name="existing"/>.</summary>
    public CoverageFunction(IReadOnlyList<double[]> points, IReadOnlyList<double> weights, IReadOnlyList<double[]> existing)
    {
        _points = points.ToArray();
        var total = weights.Sum();
        _weights = weights.Select(w => total > 0 ? w / total : 1.0 / weights.Count).ToArray();
        _best = new double[_points.Length];
        foreach (var e in existing)
        {
            Add(e);
        }
    }

    private CoverageFunction(double[][] points, double[] weights, double[] best)
    {
        _points = points;
        _weights = weights;
        _best = best;
    }

    /// <summary>Current value f(S) in [0, 1].</summary>
    public double Value
    {
        get
        {
            var sum = 0.0;
            for (var i = 0; i < _points.Length; i++)
            {
                sum += _weights[i] * _best[i];
            }

            return sum;
        }
    }

    /// <summary>The normalised weight of each demand point.</summary>
    public IReadOnlyList<double> Weights => _weights;

    /// <summary>The best similarity demand point <paramref name="i"/> has with the set so far.</summary>
    public double BestSimilarity(int i) => _best[i];

    /// <summary>A copy that can be changed without changing this one.</summary>
    public CoverageFunction Clone() => new(_points, _weights, (double[])_best.Clone());

    /// <summary>k(a, b) = exp(-|a - b|^2 / 2), 0 beyond the cut-off.</summary>
    public static double Similarity(double[] a, double[] b)
    {
        var d2 = 0.0;
        for (var k = 0; k < a.Length; k++)
        {
            var d = a[k] - b[k];
            d2 += d * d;
        }

        return d2 > CutoffSquared ? 0 : Math.Exp(-d2 / 2);
    }

    /// <summary>f(S + {facility}) - f(S).</summary>
    public double Gain(double[] facility)
    {
        var gain = 0.0;
        for (var i = 0; i < _points.Length; i++)
        {
            var s = Similarity(_points[i], facility);
            if (s > _best[i])
            {
                gain += _weights[i] * (s - _best[i]);
            }
        }

        return gain;
    }

    /// <summary>The demand points a facility reaches (similarity above the cut-off), with their similarities.</summary>
    public Reach ReachOf(double[] facility)
    {
        var index = new List<int>();
        var similarity = new List<float>();
        for (var i = 0; i < _points.Length; i++)
        {
            var s = Similarity(_points[i], facility);
            if (s > 0)
            {
                index.Add(i);
                similarity.Add((float)s);
            }
        }

        return new Reach(index.ToArray(), similarity.ToArray());
    }

    /// <summary>f(S + facility) - f(S) from a precomputed reach (no exponentials).</summary>
    public double Gain(Reach reach)
    {
        var gain = 0.0;
        var index = reach.Index;
        var similarity = reach.Similarity;
        for (var k = 0; k < index.Length; k++)
        {
            var i = index[k];
            var s = similarity[k];
            if (s > _best[i])
            {
                gain += _weights[i] * (s - _best[i]);
            }
        }

        return gain;
    }

    /// <summary>Adds a facility to S.</summary>
    public void Add(double[] facility)
    {
        for (var i = 0; i < _points.Length; i++)
        {
            var s = Similarity(_points[i], facility);
            if (s > _best[i])
            {
                _best[i] = s;
            }
        }
    }

    /// <summary>f(S) for an arbitrary set, from scratch (existing runs included via <paramref name="start"/>).</summary>
    public static double Evaluate(CoverageFunction start, IEnumerable<double[]> facilities)
    {
        var f = start.Clone();
        foreach (var facility in facilities)
        {
            f.Add(facility);
        }

        return f.Value;
    }
}

/// <summary>The demand points one facility reaches and its similarity with each.</summary>
/// Similarities are kept in single precision (relative error below 1e-7), which only affects the order in which
/// near-equal gains are compared, never the value of f.
public sealed record Reach(int[] Index, float[] Similarity)
{
    /// <summary>Approximate bytes held.</summary>
    public long Bytes => Index.Length * 8L + 64;
}
