// OpenAPI for zod-validated routes: the request body's JSON Schema comes from the same zod
// schema the ZodValidationPipe enforces, so the document cannot drift from validation; an answer
// declared in shared/ is documented from the schema the tablet parses it with.
import { applyDecorators } from '@nestjs/common';
import { ApiBearerAuth, ApiBody, ApiResponse } from '@nestjs/swagger';
import { z } from 'zod';

export function ApiZodBody(schema: z.ZodType): MethodDecorator {
  return ApiBody({
    schema: z.toJSONSchema(schema, { target: 'openapi-3.0', unrepresentable: 'any' }) as object,
  });
}

/** An answer whose shape is a shared zod schema. */
export function ApiZodResponse(
  status: number,
  schema: z.ZodType,
  description: string,
): MethodDecorator {
  return ApiResponse({
    status,
    description,
    schema: z.toJSONSchema(schema, {
      target: 'openapi-3.0',
      unrepresentable: 'any',
      io: 'output',
    }) as object,
  });
}

/** A route behind the default-deny guard: bearer token, 401 without it, 403 for a wrong role. */
export function ApiSignedIn(): MethodDecorator & ClassDecorator {
  return applyDecorators(
    ApiBearerAuth(),
    ApiResponse({
      status: 401,
      description:
        'No token, an expired one, or an ended session (a revoked tablet also gets erase: true).',
    }),
    ApiResponse({ status: 403, description: 'The role or the session is not allowed here.' }),
  );
}
