using Campaign.Core.Selection;
using Google.OrTools.LinearSolver;

namespace Campaign.Bench;

/// <summary>
/// The budgeted coverage problem solved exactly as a mixed-integer program (OR-Tools with its bundled SCIP), for
/// comparison with Campaign's selector on instances small enough to finish. Facility-location form: x_j = 1 when
/// candidate j is chosen, z_ij = share of demand point i served by j; maximise sum_i w_i (e_i + sum_j (s_ij - e_i)+ z_ij)
/// with sum_j z_ij &lt;= 1, z_ij &lt;= x_j, sum_j c_j x_j &lt;= B, where s_ij is the similarity and e_i what existing runs
/// already give point i. Only pairs with s_ij above the coverage function's cut-off get a variable.
/// </summary>
public static class ExactCoverage
{
    public static (double Objective, bool Optimal) Solve(SelectionProblem problem, TimeSpan limit)
    {
        var candidates = problem.Candidates;
        var n = candidates.Count;
        var f = new CoverageFunction(candidates.Select(c => c.Coordinates).ToList(), candidates.Select(c => c.Value).ToList(), problem.Existing);
        var solver = Solver.CreateSolver("SCIP") ?? throw new InvalidOperationException("OR-Tools has no SCIP here");
        solver.SetTimeLimit((long)limit.TotalMilliseconds);
        var x = Enumerable.Range(0, n).Select(j => solver.MakeBoolVar("x" + j)).ToArray();
        var objective = solver.Objective();
        objective.SetMaximization();
        var constant = 0.0;
        for (var i = 0; i < n; i++)
        {
            var existing = f.BestSimilarity(i);
            constant += f.Weights[i] * existing;
            var serve = solver.MakeConstraint(0, 1, "serve" + i);
            for (var j = 0; j < n; j++)
            {
                var gain = CoverageFunction.Similarity(candidates[i].Coordinates, candidates[j].Coordinates) - existing;
                if (gain <= 1e-4)
                {
                    continue;
                }

                var z = solver.MakeNumVar(0, 1, $"z{i}_{j}");
                serve.SetCoefficient(z, 1);
                var link = solver.MakeConstraint(double.NegativeInfinity, 0, $"link{i}_{j}");
                link.SetCoefficient(z, 1);
                link.SetCoefficient(x[j], -1);
                objective.SetCoefficient(z, f.Weights[i] * gain);
            }
        }

        foreach (var (pool, p) in problem.Pools.Select((pool, p) => (pool, p)))
        {
            var budget = solver.MakeConstraint(double.NegativeInfinity, pool.Capacity, "budget" + p);
            for (var j = 0; j < n; j++)
            {
                budget.SetCoefficient(x[j], candidates[j].Options.Where(o => o.Pool == p).Select(o => o.Cost).DefaultIfEmpty(double.PositiveInfinity).Min() is var cost && double.IsFinite(cost) ? cost : pool.Capacity * 2);
            }
        }

        var status = solver.Solve();
        if (status is not (Solver.ResultStatus.OPTIMAL or Solver.ResultStatus.FEASIBLE))
        {
            throw new InvalidOperationException("the exact solver found no solution: " + status);
        }

        return (constant + objective.Value(), status == Solver.ResultStatus.OPTIMAL);
    }
}
