namespace Campaign.Core.Selection;

/// <summary>Runs a deeply recursive search on a thread with a large stack (depth grows with the number of items).</summary>
internal static class DeepStack
{
    private const int StackBytes = 512 * 1024 * 1024;

    public static void Run(Action action)
    {
        Exception? failure = null;
        var thread = new Thread(
            () =>
            {
                try
                {
                    action();
                }
                catch (Exception e)
                {
                    failure = e;
                }
            },
            StackBytes);
        thread.Start();
        thread.Join();
        if (failure is not null)
        {
            throw new InvalidOperationException("The selection search failed: " + failure.Message, failure);
        }
    }
}
