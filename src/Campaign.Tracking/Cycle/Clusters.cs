using System.Globalization;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Last step: which clusters were at fault this cycle (a new spell goes to the event log with the whole error),
/// which answered again (their fault is cleared), and when the cycle ran.
/// </summary>
internal static class Clusters
{
    public static void Record(CycleContext c)
    {
        var now = c.Now;
        c.Commit(tx =>
        {
            foreach (var (cluster, detail) in c.Faults)
            {
                if (ClusterFaultStore.Record(c.Db, tx, cluster, Batch.BatchErrorText.FirstLine(detail.Split(": ", 2)[^1]), now))
                {
                    EventLog.Append(c.Db, tx, c.Time, "cluster.unreachable", cluster, detail);
                }
            }

            foreach (var cluster in c.Answered.Where(m => !c.Faults.ContainsKey(m)))
            {
                ClusterFaultStore.NoteReached(c.Db, tx, cluster, now);
                if (ClusterFaultStore.Clear(c.Db, tx, cluster) is { } cleared)
                {
                    EventLog.Append(c.Db, tx, c.Time, "cluster.reachable", cluster, $"answered again (unreachable since {cleared.Since.ToString("O", CultureInfo.InvariantCulture)})");
                }
            }

            ClusterFaultStore.NoteCycle(c.Db, tx, now);
        });
    }
}
