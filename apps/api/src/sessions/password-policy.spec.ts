import { newInitialPassword } from './password-hashing';
import { passwordProblem } from './password-policy';

describe('the password policy', () => {
  const email = 'jonas.weber@waterworks.example';

  it.each([
    ['short', 'elevenchars', /at least 12/],
    ['too long', 'ab'.repeat(65), /at most 128/],
    ['in the common list', '1qaz2wsx3edc', /commonly used/],
    ['common, any case', 'QWERTY123456', /commonly used/],
    ['a common word with digits and symbols appended', 'Sunshine2026!!', /commonly used/],
    ['the email name', 'jonas.weber!!', /email name/],
    ['the email name inside', 'My-JONAS.WEBER-pass', /email name/],
    ['one repeated character', 'aaaaaaaaaaaaaaaa', /too few different/],
  ])('refuses a password that is %s', (_what, password, reason) => {
    expect(passwordProblem(password, email)).toMatch(reason);
  });

  it.each([
    'titration endpoint at pH 8.2',
    'Kp7wX-3mQr9-bZt4e-Hn2Ys',
    'zwölf Zeichen genügen hier',
    'a 128-character phrase: ' + 'w'.repeat(104),
  ])('accepts %p', (password) => {
    expect(passwordProblem(password, email)).toBeNull();
  });

  it('counts characters, not UTF-16 units', () => {
    expect(passwordProblem('🧪🧪🧪🧪🧪🧪🧪🧪🧪🧪🧪', email)).toMatch(/at least 12/);
  });

  it('makes one-time passwords of 20 random characters that pass the policy', () => {
    const seen = new Set<string>();
    for (let i = 0; i < 200; i++) {
      const password = newInitialPassword();
      expect(password).toMatch(/^[A-HJ-NP-Za-km-z2-9]{5}(-[A-HJ-NP-Za-km-z2-9]{5}){3}$/);
      expect(passwordProblem(password, email)).toBeNull();
      seen.add(password);
    }
    expect(seen.size).toBe(200);
  });
});
