// Property tests explore new random cases on every developer's run; under CI (CI=true) they use
// one fixed seed so a landing is judged on a repeatable run. A failure prints its seed and
// counterexample either way; FUSELIGHT_FC_SEED replays one.
import fc from 'fast-check';

const seed = process.env.FUSELIGHT_FC_SEED ?? (process.env.CI ? '20261201' : undefined);
if (seed !== undefined) fc.configureGlobal({ seed: Number(seed) });
