import { z } from "zod";

export const roleSchema = z.enum(["admin", "staff", "researcher", "engineer"]);

export const inviteUserSchema = z.object({
  email: z.string().trim().toLowerCase().max(254).pipe(z.email("Enter a valid e-mail address.")),
  role: roleSchema,
});
export type InviteUser = z.infer<typeof inviteUserSchema>;

/** The invitation link's token: 32 random bytes, base64url. */
export const invitationTokenSchema = z
  .string()
  .trim()
  .regex(/^[A-Za-z0-9_-]{20,100}$/, "This invitation link is not valid.");

export const acceptInvitationSchema = z.object({
  token: invitationTokenSchema,
  /** Needed for a new account; ignored when the address already has one. */
  name: z.string().trim().max(120).optional(),
  /** Checked against the password policy by the service (new accounts only). */
  password: z.string().max(200).optional(),
});
export type AcceptInvitation = z.infer<typeof acceptInvitationSchema>;

export interface PendingInvitation {
  id: string;
  email: string;
  role: z.infer<typeof roleSchema>;
  invitedByName: string | null;
  createdAt: Date;
  expiresAt: Date;
  expired: boolean;
}

/** What the public invitation page may show about an invitation. */
export interface InvitationPreview {
  email: string;
  role: z.infer<typeof roleSchema>;
  facilityName: string;
  expiresAt: Date;
  /** The address already has an account: accepting adds a membership, the password stays. */
  hasAccount: boolean;
}
