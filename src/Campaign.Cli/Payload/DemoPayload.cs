using System.Diagnostics;
using System.Globalization;
using System.Runtime.InteropServices;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using Campaign.Core.Domain;
using Campaign.Core.Physics;

namespace Campaign.Cli.Payload;

/// <summary>
/// The demo payload: a small checkpointing program that stands in for a simulation code. It integrates the
/// post-Newtonian inspiral of its run's configuration (TaylorT4, RK4 with a fixed step in M) up to the end of
/// inspiral, then advances time through the merger and ringdown allowance until the run's target length. It
/// appends "t norm" lines to progress.dat, writes checkpoints atomically with a completion marker, checkpoints
/// and exits on the warning signal (or SIGTERM), and resumes exactly from a checkpoint: a resumed run ends in
/// the same final state as an uninterrupted one. Invoked as `campaign __demo-payload` from the run folder.
/// Settings (environment, or payload.json in the run folder with the lower-case names): CAMPAIGN_RESTART (a
/// checkpoint path, or "newest"), DEMO_STEPS_PER_SECOND / steps_per_second (pace), DEMO_CHECKPOINT_EVERY /
/// checkpoint_every and DEMO_PROGRESS_EVERY / progress_every (M), DEMO_INSTABILITY_RATE / instability_rate (per M:
/// makes the constraint norm grow), DEMO_STALL_AT / stall_at (t at which it stops making progress).
/// </summary>
internal static class DemoPayload
{
    public const string Command = "__demo-payload";

    private static readonly JsonSerializerOptions Json = new() { WriteIndented = false };

    /// <summary>The integrated state; doubles round-trip exactly through JSON.</summary>
    internal sealed record State(long Steps, double T, double X, double Phase);

    private sealed record RunFile(double q, double[] chi1, double[] chi2, double omega0, double target_length, double end_of_inspiral_x);

    public static int Run(string folder)
    {
        // The warning signal first of all: until this runs, the signal's default action would end the process.
        var stop = 0;
        using var warn = PosixSignalRegistration.Create((PosixSignal)10, c => { c.Cancel = true; Interlocked.Exchange(ref stop, 1); });
        using var term = PosixSignalRegistration.Create(PosixSignal.SIGTERM, c => { c.Cancel = true; Interlocked.Exchange(ref stop, 1); });
        var run = JsonSerializer.Deserialize<RunFile>(File.ReadAllText(Path.Combine(folder, "run.json")))!;
        var overrides = File.Exists(Path.Combine(folder, "payload.json"))
            ? JsonSerializer.Deserialize<Dictionary<string, double>>(File.ReadAllText(Path.Combine(folder, "payload.json")))!
            : new Dictionary<string, double>();
        double Setting(string key, string variable, double fallback) => overrides.TryGetValue(key, out var v) ? v : Number(variable, fallback);
        var dt = 1.0;
        var pace = Setting("steps_per_second", "DEMO_STEPS_PER_SECOND", 0);
        var checkpointEvery = (long)Setting("checkpoint_every", "DEMO_CHECKPOINT_EVERY", 500);
        var progressEvery = (long)Setting("progress_every", "DEMO_PROGRESS_EVERY", 10);
        var instability = Setting("instability_rate", "DEMO_INSTABILITY_RATE", 0);
        var stallAt = Setting("stall_at", "DEMO_STALL_AT", double.PositiveInfinity);
        var inspiral = new TaylorT4(MassRatio.From(run.q), run.chi1[2], run.chi2[2]);
        var checkpoints = Path.Combine(folder, "checkpoints");
        Directory.CreateDirectory(checkpoints);


        var state = Start(folder, checkpoints, run.omega0);
        using var progress = new StreamWriter(new FileStream(Path.Combine(folder, "progress.dat"), FileMode.Append, FileAccess.Write, FileShare.ReadWrite)) { AutoFlush = true };
        var clock = Stopwatch.StartNew();
        long stepsThisLeg = 0;
        while (state.T < run.target_length)
        {
            if (Volatile.Read(ref stop) == 1)
            {
                WriteCheckpoint(checkpoints, state);
                return 0;
            }

            if (state.T >= stallAt)
            {
                Thread.Sleep(100); // a stuck solver: alive, but no progress
                continue;
            }

            state = Step(state, dt, inspiral, run.end_of_inspiral_x);
            stepsThisLeg++;
            if (state.Steps % progressEvery == 0)
            {
                var norm = instability > 0 ? 1e-6 * Math.Exp(instability * state.T) : 1e-6 * (1 + 0.05 * Math.Sin(state.T / 37));
                progress.WriteLine(state.T.ToString("R", CultureInfo.InvariantCulture) + " " + norm.ToString("R", CultureInfo.InvariantCulture));
            }

            if (state.Steps % checkpointEvery == 0)
            {
                WriteCheckpoint(checkpoints, state);
            }

            if (pace > 0)
            {
                var ahead = stepsThisLeg / pace - clock.Elapsed.TotalSeconds;
                if (ahead > 0.002)
                {
                    Thread.Sleep(TimeSpan.FromSeconds(ahead));
                }
            }
        }

        File.WriteAllText(Path.Combine(folder, "final.json"), JsonSerializer.Serialize(state, Json));
        File.WriteAllText(Path.Combine(folder, "DONE"), "");
        return 0;
    }

    /// <summary>One RK4 step of dx/dt (TaylorT4) and dphase/dt = x^(3/2); past the end of inspiral only t advances.</summary>
    internal static State Step(State s, double dt, TaylorT4 inspiral, double xEnd)
    {
        if (s.X >= xEnd)
        {
            return s with { Steps = s.Steps + 1, T = s.T + dt };
        }

        double F(double x) => inspiral.XDot(Math.Min(x, xEnd));
        var k1 = F(s.X);
        var k2 = F(s.X + dt / 2 * k1);
        var k3 = F(s.X + dt / 2 * k2);
        var k4 = F(s.X + dt * k3);
        var x = Math.Min(s.X + dt / 6 * (k1 + 2 * k2 + 2 * k3 + k4), xEnd);
        var phase = s.Phase + dt * (Math.Pow(s.X, 1.5) + Math.Pow(x, 1.5)) / 2;
        return new State(s.Steps + 1, s.T + dt, x, phase);
    }

    private static State Start(string folder, string checkpoints, double omega0)
    {
        var restart = Environment.GetEnvironmentVariable("CAMPAIGN_RESTART");
        if (restart == "newest")
        {
            restart = Directory.EnumerateFiles(checkpoints, "ckpt-*.json").Where(f => File.Exists(f + ".ok")).Order(StringComparer.Ordinal).LastOrDefault();
        }

        if (!string.IsNullOrEmpty(restart))
        {
            return JsonSerializer.Deserialize<State>(File.ReadAllText(Path.IsPathRooted(restart) ? restart : Path.Combine(folder, restart)), Json)!;
        }

        return new State(0, 0, Math.Pow(omega0, 2.0 / 3.0), 0);
    }

    /// <summary>Writes the checkpoint to a temporary file, renames it into place, then writes its completion marker.</summary>
    internal static void WriteCheckpoint(string checkpoints, State state)
    {
        var path = Path.Combine(checkpoints, "ckpt-" + state.Steps.ToString("D9", CultureInfo.InvariantCulture) + ".json");
        var temporary = path + ".partial";
        var bytes = Encoding.UTF8.GetBytes(JsonSerializer.Serialize(state, Json));
        File.WriteAllBytes(temporary, bytes);
        File.Move(temporary, path, overwrite: true);
        // A checksum in sha256sum's format, then the completion marker (for checkpoint_checksum and checkpoint_marker).
        File.WriteAllText(path + ".sha256", Convert.ToHexStringLower(SHA256.HashData(bytes)) + "  " + Path.GetFileName(path) + "\n");
        File.WriteAllText(path + ".ok", "");
    }

    private static double Number(string name, double fallback) =>
        double.TryParse(Environment.GetEnvironmentVariable(name), NumberStyles.Float, CultureInfo.InvariantCulture, out var v) ? v : fallback;
}
