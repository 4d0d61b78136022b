import { type DynamicModule, Global, Module } from '@nestjs/common';
import { APP_FILTER, APP_GUARD, APP_PIPE } from '@nestjs/core';
import { type Database, PrismaClient } from '@registry/data';
import { Pool } from 'pg';

import { AuditWriter } from './audit/audit-writer';
import { AuditTrailModule } from './audit-trail/audit-trail.module';
import { AuthGuard } from './auth/auth.guard';
import { Authenticator } from './auth/authenticator';
import { CredentialCache } from './auth/credential-cache';
import { MeController } from './auth/me.controller';
import { BalanceChecksModule } from './balance-checks/balance-checks.module';
import { CalendarFeedsModule } from './calendar-feeds/calendar-feeds.module';
import { CalibrationsModule } from './calibrations/calibrations.module';
import { CalculationsModule } from './calculations/calculations.module';
import { Clock, SystemClock } from './common/clock';
import { CredentialsModule } from './credentials/credentials.module';
import { DeliveriesModule } from './deliveries/deliveries.module';
import { DueModule } from './due/due.module';
import { FactorsModule } from './factors/factors.module';
import { ExportsModule } from './exports/exports.module';
import { APP_CONFIG, type AppConfig } from './config/config.schema';
import { ProblemFilter } from './common/problem/problem.filter';
import { ProblemTypesController } from './common/problem/problem-types.controller';
import { RegistryValidationPipe } from './common/validation';
import { HealthController } from './health/health.controller';
import { withAmbientTransactions } from './idempotency/ambient-transaction';
import { IdempotencyRepository } from './idempotency/idempotency.repository';
import { IdempotencyService } from './idempotency/idempotency.service';
import { ImpactModule } from './impact/impact.module';
import { InventoryModule } from './inventory/inventory.module';
import { LabsModule } from './labs/labs.module';
import { HttpMetrics } from './metrics/metrics';
import { MetricsController } from './metrics/metrics.controller';
import { NoticesModule } from './notices/notices.module';
import { PeopleModule } from './people/people.module';
import { PoliciesModule } from './policies/policies.module';
import { ReferenceModule } from './reference/reference.module';
import { SchedulerModule } from './scheduler/scheduler.module';
import { SessionsModule } from './sessions/sessions.module';
import { WebhooksModule } from './webhooks/webhooks.module';

export interface AppDependencies {
  readonly config: AppConfig;
  readonly database: Database;
  readonly metrics: HttpMetrics;
  /** Defaults to the system clock; tests pass a ManualClock. */
  readonly clock?: Clock;
}

/** Root module: shared infrastructure is global, features are imported below. */
@Global()
@Module({})
export class AppModule {
  static register(deps: AppDependencies): DynamicModule {
    const infrastructure = [
      { provide: APP_CONFIG, useValue: deps.config },
      // Services' Prisma calls join a keyed write's transaction (see idempotency/ambient-transaction.ts).
      { provide: PrismaClient, useValue: withAmbientTransactions(deps.database.prisma) },
      { provide: Pool, useValue: deps.database.pool },
      { provide: HttpMetrics, useValue: deps.metrics },
      { provide: Clock, useValue: deps.clock ?? new SystemClock() },
      { provide: CredentialCache, useClass: CredentialCache },
      { provide: Authenticator, useClass: Authenticator },
      { provide: AuditWriter, useClass: AuditWriter },
      { provide: IdempotencyRepository, useClass: IdempotencyRepository },
      { provide: IdempotencyService, useClass: IdempotencyService },
    ];
    return {
      module: AppModule,
      imports: [
        AuditTrailModule,
        CalculationsModule,
        CalibrationsModule,
        ReferenceModule,
        SessionsModule,
        PeopleModule,
        LabsModule,
        CredentialsModule,
        InventoryModule,
        BalanceChecksModule,
        ImpactModule,
        FactorsModule,
        ExportsModule,
        PoliciesModule,
        DueModule,
        NoticesModule,
        SchedulerModule,
        CalendarFeedsModule,
        WebhooksModule,
        DeliveriesModule,
      ],
      controllers: [HealthController, MetricsController, ProblemTypesController, MeController],
      providers: [
        ...infrastructure,
        { provide: APP_GUARD, useClass: AuthGuard },
        { provide: APP_PIPE, useClass: RegistryValidationPipe },
        { provide: APP_FILTER, useClass: ProblemFilter },
      ],
      exports: infrastructure.map((p) => p.provide),
    };
  }
}
