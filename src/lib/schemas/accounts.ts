import { z } from 'zod';

export const signInSchema = z.object({
	email: z.string().trim().toLowerCase().email('Enter an e-mail address such as name@lab.example.').max(254),
	password: z.string().min(1, 'Enter your password.').max(200, 'Passwords are at most 200 characters.')
});
