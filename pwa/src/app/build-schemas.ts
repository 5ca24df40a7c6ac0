// The record schemas, built a few at a time before the screens that use them load.
//
// Building a zod schema is work on the main thread: every field is a few schema objects, each
// set up with its methods. The tablet's twenty record schemas take about 50 ms on the
// benchmark's machine, some 200 ms on a tablet four times slower; built in one go they would be
// one long task, during which a tap waits. So the pieces below are imported one after another,
// each in a task of its own: zod, then the field builders, then one schema module at a time.
// (Imported together, they would all wait for zod and then all run in the task it arrives in.)
// The registry (shared/src/schemas/registry.ts), which ties them together, comes last.
let built: Promise<void> | null = null;

const PIECES = [
  () => import('zod'),
  () => import('@fuselight/shared/schemas/field-types.schema'),
  () => import('@fuselight/shared/schemas/section.schema'),
  () => import('@fuselight/shared/schemas/patient.schema'),
  () => import('@fuselight/shared/schemas/visit.schema'),
  () => import('@fuselight/shared/schemas/amblyoscope.schema'),
  () => import('@fuselight/shared/schemas/acuity.schema'),
  () => import('@fuselight/shared/schemas/cover-test.schema'),
  () => import('@fuselight/shared/schemas/near-vision.schema'),
  () => import('@fuselight/shared/schemas/motility.schema'),
  () => import('@fuselight/shared/schemas/plan.schema'),
  () => import('@fuselight/shared/schemas/attachment.schema'),
  () => import('@fuselight/shared/schemas/letter.schema'),
  () => import('@fuselight/shared/schemas/addendum.schema'),
];

/**
 * Resolves once every record schema is built; the screens and the sync engine load after it
 * (signed-in-routes.tsx). A failed load is not kept: the next call tries again.
 */
export function buildSchemas(): Promise<void> {
  built ??= buildInPieces().catch((error: unknown) => {
    built = null;
    throw error;
  });
  return built;
}

async function buildInPieces(): Promise<void> {
  for (const load of PIECES) {
    await load();
    await nextTask();
  }
  await import('@fuselight/shared/schemas/registry');
}

/** Resolves in a later task, after whatever the browser has due (a frame, input). */
function nextTask(): Promise<void> {
  return new Promise((resolve) => setTimeout(resolve, 0));
}
