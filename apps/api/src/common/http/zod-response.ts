import { applyDecorators, UseInterceptors } from '@nestjs/common';
import { ZodResponse as DescribeResponse, ZodSerializerInterceptor } from 'nestjs-zod';

/**
 * nestjs-zod's ZodResponse (status, OpenAPI schema, output type) with its serializer bound to
 * this route only. Registered globally, the serializer cost every request an interceptor
 * pipeline, about 140 µs of CPU on the factor service's hot path, which needs none of it.
 * Lint forbids importing ZodResponse from nestjs-zod directly, so no route forgets it.
 */
export const ZodResponse = ((options: Parameters<typeof DescribeResponse>[0]) =>
  applyDecorators(DescribeResponse(options), UseInterceptors(ZodSerializerInterceptor))) as unknown as typeof DescribeResponse;
