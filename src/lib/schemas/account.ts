import { z } from 'zod';

// Shared by forms and the server: the same rules on both sides.
export const emailField = z.string().trim().toLowerCase().max(254, 'That e-mail address is too long.').email('Enter a valid e-mail address.');
export const nameField = z.string().trim().min(1, 'Enter a name.').max(120, 'Use at most 120 characters.');

export const signUpSchema = z.object({
  studioName: nameField,
  name: nameField,
  email: emailField,
  password: z.string().min(10, 'Use a password of at least 10 characters.').max(200),
});

export const signInSchema = z.object({
  email: emailField,
  password: z.string().min(1, 'Enter your password.').max(200),
});

export const acceptInviteSchema = z.object({
  name: nameField,
  password: z.string().min(10, 'Use a password of at least 10 characters.').max(200),
});

export const inviteSchema = z.object({ email: emailField, role: z.enum(['owner', 'retoucher']).default('retoucher') });
