import { Controller, Get, Header } from '@nestjs/common';
import { ApiExcludeController } from '@nestjs/swagger';

import { HttpMetrics } from './metrics';
import { Public } from '../auth/auth.decorators';

@ApiExcludeController()
@Controller('metrics')
@Public()
export class MetricsController {
  constructor(private readonly metrics: HttpMetrics) {}

  @Get()
  @Header('content-type', 'text/plain; version=0.0.4; charset=utf-8')
  scrape(): Promise<string> {
    return this.metrics.registry.metrics();
  }
}
