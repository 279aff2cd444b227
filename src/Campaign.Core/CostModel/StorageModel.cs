using Campaign.Core.Domain;
using MathNet.Numerics.LinearAlgebra;

namespace Campaign.Core.CostModel;

/// <summary>
/// Storage per run: the size of one checkpoint and the total output kept. Fitted from the logs when at least
/// <see cref="MinimumRuns"/> runs logged the size: ln(checkpoint_gb) = a + b level and
/// ln(output_gb / (T/1000 M)) = c + d level (b or d default to ln 2 when the logs hold one level only).
/// Without such logs a placeholder rule of thumb (order of magnitude only, not measured): one checkpoint is
/// 2^level GB and the output 0.5 x 2^level GB per 1000 M of simulated time. Replace it by logging sizes.
/// </summary>
public sealed record StorageModel(double CheckpointA, double CheckpointB, double OutputA, double OutputB, bool CheckpointFitted, bool OutputFitted)
{
    /// <summary>Runs with a logged size needed before the size is fitted.</summary>
    public const int MinimumRuns = 3;

    /// <summary>The rule of thumb used when nothing was logged.</summary>
    public static StorageModel RuleOfThumb => new(0, Math.Log(2), Math.Log(0.5), Math.Log(2), false, false);

    /// <summary>GB of one checkpoint at a level.</summary>
    public double CheckpointGb(int level) => Math.Exp(CheckpointA + CheckpointB * level);

    /// <summary>GB of output kept for a run of simulated length <paramref name="length"/> (M) at a level.</summary>
    public double OutputGb(int level, double length) => Math.Exp(OutputA + OutputB * level) * length / 1000;

    /// <summary>Fits what the logs allow; the rest stays at the rule of thumb.</summary>
    public static StorageModel Fit(IReadOnlyList<(RunLog Log, double Length)> logs)
    {
        var model = RuleOfThumb;
        var checkpoints = logs.Where(l => l.Log.CheckpointGb is not null).Select(l => (Level: (double)l.Log.Level, Y: Math.Log(l.Log.CheckpointGb!.Value))).ToList();
        if (checkpoints.Count >= MinimumRuns)
        {
            var (a, b) = Line(checkpoints);
            model = model with { CheckpointA = a, CheckpointB = b, CheckpointFitted = true };
        }

        var outputs = logs.Where(l => l.Log.OutputGb is not null).Select(l => (Level: (double)l.Log.Level, Y: Math.Log(l.Log.OutputGb!.Value / (l.Length / 1000)))).ToList();
        if (outputs.Count >= MinimumRuns)
        {
            var (a, b) = Line(outputs);
            model = model with { OutputA = a, OutputB = b, OutputFitted = true };
        }

        return model;
    }

    private static (double A, double B) Line(IReadOnlyList<(double Level, double Y)> points)
    {
        if (points.Select(p => p.Level).Distinct().Count() < 2)
        {
            var b = Math.Log(2);
            return (points.Average(p => p.Y - b * p.Level), b);
        }

        var x = Matrix<double>.Build.Dense(points.Count, 2, (i, j) => j == 0 ? 1 : points[i].Level);
        var y = Vector<double>.Build.Dense(points.Count, i => points[i].Y);
        var fit = LinearFit.Solve(x, y);
        return (fit.Coefficients[0], fit.Coefficients[1]);
    }
}
