// The demo seed, in order. To grow the scenario, add an idempotent step class and list it here.
import { ClinicalDemoSeed } from './clinical-demo.seed';
import { DemoTabletSeed } from './demo-tablet.seed';
import { PeopleSeed } from './people.seed';
import type { SeedStepClass } from './seed-step';
import { SitesSeed } from './sites.seed';

export const seedSteps: SeedStepClass[] = [SitesSeed, PeopleSeed, DemoTabletSeed, ClinicalDemoSeed];
