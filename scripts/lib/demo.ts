/** The invented demo studio's sign-ins, printed by `npm start` and used by the seed. */
export const DEMO_PASSWORD = 'demo-studio-2026';
export const DEMO_SIGN_INS = [
  { role: 'owner', name: 'Ada Quillfeather', email: 'owner@harbourlight.test', password: DEMO_PASSWORD },
  { role: 'retoucher', name: 'Tomas Inkwell', email: 'retoucher@harbourlight.test', password: DEMO_PASSWORD },
] as const;
