import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import { DocumentBuilder, type OpenAPIObject, SwaggerModule } from '@nestjs/swagger';
import { cleanupOpenApiDoc } from 'nestjs-zod';

export const CAUTION =
  'Results are only as good as the procedure and the data entered. This service supports, and does not replace, ' +
  "the laboratory's quality system, accredited calibration of balances and weights, and local regulations; " +
  'where a result decides whether equipment may be used, a qualified person decides.';

/** Builds the OpenAPI 3 document from the controllers and their zod DTOs. */
export function buildOpenApiDocument(app: NestFastifyApplication, version: string): OpenAPIObject {
  const config = new DocumentBuilder()
    .setTitle('Glassware and balance calibration registry')
    .setDescription(
      'A shared registry of volumetric glassware, balances, reference weights and per-person calibration factors, ' +
        'with published-method computations (water and air density, gravimetric volume, buoyancy, uncertainty).\n\n' +
        'Errors are RFC 9457 problem details (`application/problem+json`); each `type` is documented under `/problems`.\n\n' +
        `**Caution.** ${CAUTION}`,
    )
    .setVersion(version)
    .addBearerAuth()
    .build();
  return cleanupOpenApiDoc(SwaggerModule.createDocument(app, config));
}

/** Serves the interactive docs at /docs and the raw document at /openapi.json. */
export function mountDocs(app: NestFastifyApplication, document: OpenAPIObject): void {
  SwaggerModule.setup('docs', app, document, {
    jsonDocumentUrl: '/openapi.json',
    yamlDocumentUrl: '/openapi.yaml',
    customSiteTitle: 'Calibration registry API',
  });
}
