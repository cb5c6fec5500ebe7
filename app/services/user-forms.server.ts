/** Validation of the user-management and account forms. */
import { z } from "zod";
import { ROLES, TOKEN_SCOPES } from "~/db/schema";
import { PASSWORD_MAX_LENGTH, PASSWORD_MIN_LENGTH } from "./password.server";

const email = z
  .string()
  .trim()
  .toLowerCase()
  .min(1, "Enter an e-mail address.")
  .max(254, "That e-mail address is too long.")
  .pipe(z.email("Enter a valid e-mail address."));
const name = z.string().trim().min(1, "Enter a name.").max(100, "Use at most 100 characters.");
const newPassword = z
  .string()
  .min(PASSWORD_MIN_LENGTH, `Use at least ${PASSWORD_MIN_LENGTH} characters.`)
  .max(PASSWORD_MAX_LENGTH, `Use at most ${PASSWORD_MAX_LENGTH} characters.`);
const role = z.enum(ROLES, "Choose viewer, engineer or admin.");

export const createUserSchema = z.object({ email, name, role, password: newPassword });
export const changeRoleSchema = z.object({ userId: z.coerce.number().int().positive(), role });
export const changeNameSchema = z.object({ name });
export const changePasswordSchema = z
  .object({
    currentPassword: z.string().min(1, "Enter your current password."),
    newPassword,
    confirmPassword: z.string(),
  })
  .refine((v) => v.newPassword === v.confirmPassword, { path: ["confirmPassword"], message: "The two new passwords differ." });

export const createTokenSchema = z
  .object({
    name: z.string().trim().min(1, "Name the token after its user, e.g. “ci runner”.").max(80, "Use at most 80 characters."),
    role,
    /** "upload": a runner token that may only upload runs (app/services/runner-auth.server.ts). */
    scope: z.enum(TOKEN_SCOPES, "Choose full or upload only.").default("full"),
    /** Optional: limit an upload token to this suite (name as in bench/suites/<name>.json). */
    suite: z
      .string()
      .trim()
      .max(64, "Use at most 64 characters.")
      .regex(/^([a-z0-9][a-z0-9-]*)?$/, "A suite name: lower-case letters, digits and dashes.")
      .default(""),
  })
  .refine((v) => !v.suite || v.scope === "upload", { path: ["suite"], message: "Only an upload token can be limited to one suite." });
export const revokeTokenSchema = z.object({ tokenId: z.coerce.number().int().positive() });
