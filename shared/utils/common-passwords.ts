/**
 * Passwords long enough to pass the length rule that are still among the first guesses of anyone trying accounts
 * (keyboard walks, repeated digits, a common word padded with digits). Compared in lower case.
 */
export const COMMON_PASSWORDS: readonly string[] = [
  '123456789012', '1234567890123', '12345678901234', '123123123123', '111111111111', '000000000000', '121212121212',
  '987654321098', '123456123456', '112233445566', '123412341234', '147258369147', '123456654321', '012345678901',
  'password1234', 'password12345', 'password123!', 'password2026', 'password2025', 'passwordpassword', 'mypassword123',
  'passw0rd1234', 'p@ssw0rd1234', 'p@ssword1234', 'p@ssw0rd123!', 'password1!23', 'thisismypassword', 'secretpassword',
  'qwerty123456', 'qwertyuiop12', 'qwertyuiop123', 'qwertyuiopas', 'qwertyuiopasdf', 'qwertyqwerty', 'asdfghjkl123',
  'asdfasdfasdf', 'azertyuiop12', 'qazwsxedcrfv', '1qaz2wsx3edc', 'zaq12wsxcde3', '1q2w3e4r5t6y', 'q1w2e3r4t5y6',
  'abcdefghijkl', 'abc123abc123', 'abcd1234abcd', 'aaaaaaaaaaaa', 'zxcvbnm12345', 'iloveyou1234', 'iloveyou2026',
  'letmein12345', 'letmeinplease', 'welcome12345', 'welcome2026!', 'welcometotheclub', 'changeme1234', 'changemenow!',
  'administrator', 'administrator1', 'admin1234567', 'adminadmin123', 'rootpassword', 'default12345', 'temporary123',
  'football1234', 'baseball1234', 'basketball12', 'monkey123456', 'sunshine1234', 'princess1234', 'dragon123456',
  'superman1234', 'starwars1234', 'trustno1trustno1', 'master123456', 'shadow123456', 'michael12345', 'jennifer1234',
  'correcthorsebatterystaple', 'opensesame123', 'whatever1234', 'nopassword12', 'computer1234', 'internet1234',
  'tercet123456', 'tercetpassword', 'vellmar12345', 'oscillator123', 'frequency123',
]
