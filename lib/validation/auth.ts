import { z } from "zod";
import { emailField, nameField, passwordField } from "./fields";

// Sign-in accepts any non-empty password: the policy applies when one is set.
export const signInSchema = z.object({
  email: emailField,
  password: z.string().min(1, "Enter your password.").max(200),
});
export type SignInInput = z.infer<typeof signInSchema>;

export const signUpSchema = z.object({
  name: nameField,
  email: emailField,
  password: passwordField,
  inviteToken: z.string().max(200).optional(),
});
export type SignUpInput = z.infer<typeof signUpSchema>;

export const forgotPasswordSchema = z.object({ email: emailField });
export type ForgotPasswordInput = z.infer<typeof forgotPasswordSchema>;

export const resetPasswordSchema = z
  .object({
    token: z.string().min(1).max(200),
    password: passwordField,
    confirmPassword: z.string(),
  })
  .refine((value) => value.password === value.confirmPassword, {
    path: ["confirmPassword"],
    message: "The two passwords differ.",
  });
export type ResetPasswordInput = z.infer<typeof resetPasswordSchema>;
