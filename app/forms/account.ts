import { z } from "zod";

/** Customer self sign-up; shared by the browser (instant messages) and the server. */
export const signUpSchema = z
  .object({
    name: z.string().trim().min(2, "Enter your name.").max(120, "Keep the name under 120 characters."),
    email: z.string().trim().toLowerCase().min(1, "Enter your e-mail address.").email("Enter a valid e-mail address."),
    phone: z
      .string()
      .trim()
      .max(40, "Keep the phone number under 40 characters.")
      .regex(/^[0-9+()\-. ]*$/, "Use digits, spaces and + ( ) - only.")
      .optional()
      .transform((v) => (v ? v : null)),
    password: z.string().min(10, "Use at least 10 characters.").max(200, "Use at most 200 characters."),
    confirm: z.string(),
  })
  .refine((v) => v.password === v.confirm, { path: ["confirm"], message: "The two passwords differ." });

export type SignUpInput = z.infer<typeof signUpSchema>;
