import { composeNoticeMail, MAIL_CAUTION } from './notice-mail';

describe('notice e-mail content', () => {
  const facts = {
    recipientName: 'Ines Berger',
    labCode: 'WW-LAB',
    labName: 'Wastewater laboratory',
    eventKind: 'overdue',
    subjectKind: 'balance-calibration',
    subjectLabel: 'BAL-03',
    dueOn: '2026-11-30',
    noticeId: '3f2b1c0d-9e8f-4a7b-8c6d-5e4f3a2b1c0d',
  };

  it('names the item, the due date and the lab in the subject, and says it is overdue', () => {
    const mail = composeNoticeMail(facts);
    expect(mail.subject).toBe('Overdue: BAL-03 was due on 2026-11-30 (WW-LAB)');
    expect(mail.text).toContain(
      'BAL-03 in Wastewater laboratory (WW-LAB) was due on 2026-11-30: the external calibration of this balance is overdue.',
    );
    expect(mail.text.endsWith(`-- \n${MAIL_CAUTION}\n`)).toBe(true);
    expect(mail.html).toContain(MAIL_CAUTION);
  });

  it('keeps the subject on one line and escapes the HTML, whatever the label holds', () => {
    const mail = composeNoticeMail({ ...facts, eventKind: 'due-soon', subjectLabel: 'PIP-25-<b>\r\nBcc: someone@example.org' });
    expect(mail.subject).toBe('Due soon: PIP-25-<b> Bcc: someone@example.org is due on 2026-11-30 (WW-LAB)');
    expect(mail.subject).not.toMatch(/[\r\n]/);
    expect(mail.html).toContain('PIP-25-&lt;b&gt;');
    expect(mail.html).not.toContain('<b>');
  });
});
