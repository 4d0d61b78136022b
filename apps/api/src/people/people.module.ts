import { Module } from '@nestjs/common';

import { SignInRepository } from '../sessions/sign-in.repository';
import { PeopleController } from './people.controller';
import { PeopleRepository } from './people.repository';
import { PeopleService } from './people.service';
import { PersonRegistration } from './person-registration';

/** People, their registry roles and status. */
@Module({
  controllers: [PeopleController],
  providers: [PeopleRepository, PeopleService, PersonRegistration, SignInRepository],
})
export class PeopleModule {}
