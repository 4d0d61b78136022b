import { type DynamicModule, Global, Module } from '@nestjs/common';
import { APP_FILTER, APP_INTERCEPTOR, APP_PIPE } from '@nestjs/core';
import { type Database, PrismaClient } from '@registry/data';
import { ZodSerializerInterceptor } from 'nestjs-zod';
import { Pool } from 'pg';

import { APP_CONFIG, type AppConfig } from './config/config.schema';
import { ProblemFilter } from './common/problem/problem.filter';
import { ProblemTypesController } from './common/problem/problem-types.controller';
import { RegistryValidationPipe } from './common/validation';
import { HealthController } from './health/health.controller';
import { HttpMetrics } from './metrics/metrics';
import { MetricsController } from './metrics/metrics.controller';

export interface AppDependencies {
  readonly config: AppConfig;
  readonly database: Database;
  readonly metrics: HttpMetrics;
}

/** Root module: shared infrastructure is global, features are imported below. */
@Global()
@Module({})
export class AppModule {
  static register(deps: AppDependencies): DynamicModule {
    const infrastructure = [
      { provide: APP_CONFIG, useValue: deps.config },
      { provide: PrismaClient, useValue: deps.database.prisma },
      { provide: Pool, useValue: deps.database.pool },
      { provide: HttpMetrics, useValue: deps.metrics },
    ];
    return {
      module: AppModule,
      imports: [],
      controllers: [HealthController, MetricsController, ProblemTypesController],
      providers: [
        ...infrastructure,
        { provide: APP_PIPE, useClass: RegistryValidationPipe },
        { provide: APP_INTERCEPTOR, useClass: ZodSerializerInterceptor },
        { provide: APP_FILTER, useClass: ProblemFilter },
      ],
      exports: infrastructure.map((p) => p.provide),
    };
  }
}
