import type { Db } from '../common/db';

export type NoticeEventKind = 'due-soon' | 'overdue';
export type NoticeSubjectKind = 'vessel' | 'balance-calibration' | 'balance-check' | 'reference-weight' | 'instrument' | 'factor';

/** A notice the scheduler has just inserted (it did not exist before this transaction). */
export interface RaisedNotice {
  readonly id: string;
  readonly labId: string;
  readonly eventKind: NoticeEventKind;
  readonly subjectKind: NoticeSubjectKind;
  readonly subjectId: string;
  readonly subjectLabel: string;
  /** The factor's holder; null for items. */
  readonly personId: string | null;
  /** The due date announced, `YYYY-MM-DD` in the lab's time zone. */
  readonly dueOn: string;
  readonly raisedAt: Date;
  readonly detail: Readonly<Record<string, unknown>>;
  readonly recipientIds: readonly string[];
}

/**
 * Called by the scheduler inside the transaction that inserts new notices, with
 * exactly those notices, so whatever it writes (delivery rows for webhooks and
 * e-mail) commits or rolls back with them: a notice is never delivered twice,
 * nor raised without its deliveries.
 */
export abstract class NoticeFanout {
  abstract onRaised(tx: Db, notices: readonly RaisedNotice[]): Promise<void>;
}

/** Until delivery channels are configured, raising a notice only records it. */
export class RecordOnlyFanout extends NoticeFanout {
  async onRaised(): Promise<void> {
    // Nothing to deliver.
  }
}
