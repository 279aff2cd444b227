namespace Campaign.Core.CostModel;

/// <summary>
/// A named list of regression terms: "intercept", "ln_length", "ln_q", "spin", "level", "ln_cores" and
/// "cluster:NAME" (one indicator per cluster other than the reference cluster).
/// </summary>
public sealed record FeatureSet(string Name, IReadOnlyList<string> Terms)
{
    /// <summary>Prefix of cluster indicator terms.</summary>
    public const string ClusterPrefix = "cluster:";

    /// <summary>The value of every term for one observation.</summary>
    public double[] Row(CostObservation o)
    {
        var row = new double[Terms.Count];
        for (var j = 0; j < Terms.Count; j++)
        {
            row[j] = Value(Terms[j], o);
        }

        return row;
    }

    /// <summary>The value of one term for one observation.</summary>
    public static double Value(string term, CostObservation o) => term switch
    {
        "intercept" => 1,
        "ln_length" => o.LogLength,
        "ln_q" => o.LogQ,
        "spin" => o.SpinTerm,
        "level" => o.Level,
        "ln_cores" => o.LogCores,
        _ when term.StartsWith(ClusterPrefix, StringComparison.Ordinal) => o.Cluster == term[ClusterPrefix.Length..] ? 1 : 0,
        _ => throw new ArgumentException($"Unknown cost-model term '{term}'.", nameof(term)),
    };

    /// <summary>
    /// The candidate feature sets, simplest first: length, q and level; then the spin term; then ln cores; then
    /// per-cluster factors (only when at least two clusters each have <paramref name="minRunsPerCluster"/> runs).
    /// </summary>
    public static IReadOnlyList<FeatureSet> Candidates(IReadOnlyList<CostObservation> data, int minRunsPerCluster = 5)
    {
        var basic = new[] { "intercept", "ln_length", "ln_q", "level" };
        var withSpin = basic.Append("spin").ToArray();
        var withCores = withSpin.Append("ln_cores").ToArray();
        var sets = new List<FeatureSet>
        {
            new("length+q+level", basic),
            new("+spin", withSpin),
            new("+spin+cores", withCores),
        };
        var clusters = data.GroupBy(o => o.Cluster).Where(g => g.Count() >= minRunsPerCluster).Select(g => g.Key).Order(StringComparer.Ordinal).ToList();
        if (clusters.Count >= 2)
        {
            sets.Add(new FeatureSet("+spin+cores+cluster", withCores.Concat(clusters.Skip(1).Select(m => ClusterPrefix + m)).ToArray()));
        }

        return sets;
    }

    /// <summary>
    /// Physically motivated prior values of each term's coefficient, used when the logs are few: cost grows
    /// linearly with simulated length (1), about linearly with q (1; the small hole sets the step), mildly with
    /// the spin term (0.3), doubles per resolution level (ln 2), and mildly with cores (0.1, parallel
    /// efficiency). Values are common practice, order of magnitude, not measured; the intercept and cluster
    /// factors have no prior (cluster factors are pulled to 0).
    /// </summary>
    public static double PriorMean(string term) => term switch
    {
        "ln_length" => 1.0,
        "ln_q" => 1.0,
        "spin" => 0.3,
        "level" => Math.Log(2),
        "ln_cores" => 0.1,
        _ => 0.0,
    };
}
