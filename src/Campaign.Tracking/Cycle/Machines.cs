using System.Globalization;
using Campaign.Store;

namespace Campaign.Tracking.Cycle;

/// <summary>
/// Last step: which machines were at fault this cycle (a new spell goes to the event log with the whole error),
/// which answered again (their fault is cleared), and when the cycle ran.
/// </summary>
internal static class Machines
{
    public static void Record(CycleContext c)
    {
        var now = c.Now;
        c.Commit(tx =>
        {
            foreach (var (machine, detail) in c.Faults)
            {
                if (MachineFaultStore.Record(c.Db, tx, machine, Batch.BatchErrorText.FirstLine(detail.Split(": ", 2)[^1]), now))
                {
                    EventLog.Append(c.Db, tx, c.Time, "machine.unreachable", machine, detail);
                }
            }

            foreach (var machine in c.Answered.Where(m => !c.Faults.ContainsKey(m)))
            {
                if (MachineFaultStore.Clear(c.Db, tx, machine) is { } cleared)
                {
                    EventLog.Append(c.Db, tx, c.Time, "machine.reachable", machine, $"answered again (unreachable since {cleared.Since.ToString("O", CultureInfo.InvariantCulture)})");
                }
            }

            MachineFaultStore.NoteCycle(c.Db, tx, now);
        });
    }
}
