// One schema, both ends: request bodies and queries are validated by the zod schemas from
// @fuselight/shared. A DTO class made with zodDto(schema) carries its schema; the global
// ZodValidationPipe validates any parameter whose type is such a class.
import { BadRequestException, type ArgumentMetadata, type PipeTransform } from '@nestjs/common';
import type { z } from 'zod';

export interface ZodDtoClass<T extends z.ZodType = z.ZodType> {
  new (): z.infer<T>;
  zodSchema: T;
}

export function zodDto<T extends z.ZodType>(schema: T): ZodDtoClass<T> {
  class ZodDto {
    static zodSchema = schema;
  }
  return ZodDto as unknown as ZodDtoClass<T>;
}

/** Words a person can act on: "body.changes.3.changeId: Invalid UUID". */
export function describeZodError(error: z.ZodError, root: string): string {
  return error.issues
    .slice(0, 5)
    .map((issue) => {
      const path = [root, ...issue.path.map(String)].filter(Boolean).join('.');
      return `${path}: ${issue.message}`;
    })
    .join('; ');
}

export function parseWith<T extends z.ZodType>(
  schema: T,
  value: unknown,
  root: string,
): z.infer<T> {
  const result = schema.safeParse(value);
  if (!result.success) {
    throw new BadRequestException(describeZodError(result.error, root));
  }
  return result.data;
}

export class ZodValidationPipe implements PipeTransform {
  constructor(private readonly schema?: z.ZodType) {}

  transform(value: unknown, metadata: ArgumentMetadata): unknown {
    const schema =
      this.schema ?? (metadata.metatype as Partial<ZodDtoClass> | undefined)?.zodSchema ?? null;
    if (!schema) return value;
    const root =
      metadata.type === 'custom' ? '' : metadata.type === 'param' ? 'params' : metadata.type;
    return parseWith(schema, value, metadata.data ? `${root}.${metadata.data}` : root);
  }
}
