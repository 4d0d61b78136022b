import { Module } from '@nestjs/common';

import { LabsRepository } from '../labs/labs.repository';
import { CredentialsController } from './credentials.controller';
import { CredentialsRepository } from './credentials.repository';
import { CredentialsService } from './credentials.service';

/** Service credentials for other systems. */
@Module({ controllers: [CredentialsController], providers: [CredentialsRepository, CredentialsService, LabsRepository] })
export class CredentialsModule {}
