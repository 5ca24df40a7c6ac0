// Requests of the dispute routes, validated by the global zod pipe. Every message names the field
// it is about. The Disputes list's query, GET /api/conflicts' query and the resolution's body are
// shared with the tablet (@fuselight/shared).
import { z } from 'zod';

export const disputeIdParamSchema = z.uuid({ error: 'id must be a dispute id (a UUID)' });
