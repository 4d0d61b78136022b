import { Controller, Get, Query } from '@nestjs/common';
import { ApiOperation, ApiTags } from '@nestjs/swagger';
import { ZodResponse } from '../common/http/zod-response';

import { CredentialScopes } from '../auth/auth.decorators';
import { MaterialListDto, ToleranceListDto, ToleranceQueryDto } from './reference.schemas';
import { ReferenceService } from './reference.service';

/** Reference data the calculations use: published limit tables and vessel materials. */
@ApiTags('reference')
// Signed-in people, and service credentials that run calculations or read the inventory.
@CredentialScopes('calculations:run', 'inventory:read')
@Controller('v1/reference')
export class ReferenceController {
  constructor(private readonly reference: ReferenceService) {}

  @Get('tolerances')
  @ApiOperation({
    summary: 'Published maximum permissible errors of volumetric ware, by standard, with their sources',
    description:
      'Each table names its standard and table, and says per class whether its values were checked against a published copy. ' +
      'Filter with kind, accuracyClass and family. Example: `?kind=one-mark-pipette&accuracyClass=AS` for the pipettes of the ' +
      'drinking-water lab.\n\n**Caution.** A limit decides whether equipment may be used: a qualified person confirms it against the standard.',
  })
  @ZodResponse({ status: 200, type: ToleranceListDto })
  tolerances(@Query() query: ToleranceQueryDto) {
    return this.reference.tolerances(query);
  }

  @Get('materials')
  @ApiOperation({ summary: 'Vessel materials and their cubic expansion coefficients, with sources' })
  @ZodResponse({ status: 200, type: MaterialListDto })
  materials() {
    return this.reference.materials();
  }
}
