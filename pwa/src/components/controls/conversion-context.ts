// The clinic's choice of how degrees and prism dioptres are converted on screen. Exact
// (Δ = 100·tan θ) unless the clinic sets the 2Δ-per-degree rule of thumb; every number shown
// says which one made it.
import type { ConversionMethod } from '@fuselight/shared';
import { createContext } from 'react';

export const ConversionContext = createContext<ConversionMethod>('exact');
