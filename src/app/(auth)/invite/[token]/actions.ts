"use server";
// Accepting an invitation is the one public server action besides sign-in: the
// token in the form is the credential, checked (with the password policy) by the
// service in one transaction. On success the person signs in as usual.
import { redirect } from "next/navigation";
import { z } from "zod";
import { acceptInvitationSchema } from "@/contracts/invitations";
import { getDb } from "@/server/db/client";
import { AppError, unstorableTextError } from "@/server/http/errors";
import { acceptInvitation } from "@/server/services/invitations";

export interface AcceptState {
  error?: string;
  name?: string;
}

const formSchema = acceptInvitationSchema
  .extend({ confirm: z.string().max(200).optional() })
  .refine((v) => v.password === undefined || v.password === (v.confirm ?? ""), {
    message: "The two passwords differ.",
    path: ["confirm"],
  });

export async function acceptInvitationAction(_prev: AcceptState, form: FormData): Promise<AcceptState> {
  const field = (k: string) => {
    const v = form.get(k);
    return typeof v === "string" && v !== "" ? v : undefined;
  };
  const name = field("name");
  try {
    const input = formSchema.parse({
      token: field("token"),
      name,
      password: field("password"),
      confirm: field("confirm"),
    });
    await acceptInvitation(getDb(), { token: input.token, name: input.name, password: input.password });
  } catch (err) {
    if (err instanceof z.ZodError) return { error: err.issues.map((i) => i.message).join(" "), name };
    if (err instanceof AppError) return { error: err.message, name };
    const unstorable = unstorableTextError(err);
    if (unstorable) return { error: unstorable.message, name };
    console.error("[invite] unexpected error:", err instanceof Error ? err.message : "unknown error");
    return { error: "Something went wrong on our side. Try again.", name };
  }
  redirect("/sign-in?reason=invited");
}
