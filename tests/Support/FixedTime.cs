namespace Campaign.Testing;

/// <summary>A clock stopped at one instant (hand-written; tests never wait for time to pass).</summary>
public sealed class FixedTime : TimeProvider
{
    private readonly DateTimeOffset _now;

    public FixedTime(DateTimeOffset now) => _now = now;

    public static FixedTime Default => new(new DateTimeOffset(2027, 3, 1, 12, 0, 0, TimeSpan.Zero));

    public override DateTimeOffset GetUtcNow() => _now;
}
