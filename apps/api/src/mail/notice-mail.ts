/** What an e-mail about a notice says. Pure: the same notice gives the same message. */
export interface NoticeMailFacts {
  readonly recipientName: string;
  readonly labCode: string;
  readonly labName: string;
  readonly eventKind: string;
  readonly subjectKind: string;
  readonly subjectLabel: string;
  readonly dueOn: string;
  readonly noticeId: string;
}

export interface MailContent {
  readonly subject: string;
  readonly text: string;
  readonly html: string;
}

const WHAT: Record<string, string> = {
  vessel: 'the calibration of this vessel',
  'balance-calibration': 'the external calibration of this balance',
  'balance-check': 'the routine check of this balance',
  'reference-weight': 'the certificate of this reference weight',
  instrument: 'the calibration of this instrument',
  factor: 'this personal calibration factor',
};

export const MAIL_CAUTION =
  'The calibration registry supports, and does not replace, the laboratory’s quality system, accredited calibration ' +
  'of balances and weights, and local regulations. Where a result decides whether equipment may be used, a qualified ' +
  'person decides.';

const escapeHtml = (s: string) =>
  s.replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c] ?? c);
/** Subjects are one line: any line break or control character in a label becomes a space. */
const oneLine = (s: string) => s.replace(/[\u0000-\u001F\u007F]+/g, ' ');

export function composeNoticeMail(f: NoticeMailFacts): MailContent {
  const overdue = f.eventKind === 'overdue';
  const what = WHAT[f.subjectKind] ?? 'this item';
  const subject = overdue
    ? `Overdue: ${oneLine(f.subjectLabel)} was due on ${f.dueOn} (${oneLine(f.labCode)})`
    : `Due soon: ${oneLine(f.subjectLabel)} is due on ${f.dueOn} (${oneLine(f.labCode)})`;
  const sentence = overdue
    ? `${f.subjectLabel} in ${f.labName} (${f.labCode}) was due on ${f.dueOn}: ${what} is overdue.`
    : `${f.subjectLabel} in ${f.labName} (${f.labCode}) falls due on ${f.dueOn}: ${what} is due soon.`;
  const text = [
    `Hello ${f.recipientName},`,
    '',
    sentence,
    '',
    `Notice ${f.noticeId}. Acknowledge it in the registry once it is taken care of.`,
    '',
    '-- ',
    MAIL_CAUTION,
    '',
  ].join('\n');
  const html = [
    '<!doctype html><html><body>',
    `<p>Hello ${escapeHtml(f.recipientName)},</p>`,
    `<p>${escapeHtml(sentence)}</p>`,
    `<p>Notice <code>${escapeHtml(f.noticeId)}</code>. Acknowledge it in the registry once it is taken care of.</p>`,
    `<hr><p style="font-size:smaller;color:#555">${escapeHtml(MAIL_CAUTION)}</p>`,
    '</body></html>',
  ].join('\n');
  return { subject, text, html };
}
