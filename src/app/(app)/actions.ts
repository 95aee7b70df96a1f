"use server";
import { cookies } from "next/headers";
import { revalidatePath } from "next/cache";
import { z } from "zod";
import { FACILITY_COOKIE, requirePageActor } from "@/server/auth/current-actor";

/** Switch the active facility; honoured only for facilities the user belongs to. */
export async function switchFacilityAction(formData: FormData): Promise<void> {
  const facilityId = z.uuid().parse(formData.get("facilityId"));
  const ctx = await requirePageActor();
  if (!ctx.facilities.some((f) => f.facilityId === facilityId)) return;
  (await cookies()).set(FACILITY_COOKIE, facilityId, { httpOnly: true, sameSite: "lax", path: "/" });
  revalidatePath("/", "layout");
}
