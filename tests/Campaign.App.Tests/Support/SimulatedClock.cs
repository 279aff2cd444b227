namespace Campaign.App.Tests.Support;

/// <summary>A clock the test moves forward by hand (a year of a campaign passes in seconds; nothing sleeps).</summary>
public sealed class SimulatedClock : TimeProvider
{
    private DateTimeOffset _now;

    public SimulatedClock(DateTimeOffset start) => _now = start;

    public override DateTimeOffset GetUtcNow() => _now;

    public void Advance(TimeSpan by) => _now += by;
}
