import type { Metadata } from "next";
import { notFound } from "next/navigation";
import { z } from "zod";
import { requirePageActor } from "@/server/auth/current-actor";
import { getDb } from "@/server/db/client";
import { AppError } from "@/server/http/errors";
import { getMeasurement } from "@/server/services/measurements";
import { can } from "@/server/auth/permissions";
import { MeasurementView } from "./_components/measurement-view";

export const metadata: Metadata = { title: "Measurement" };

export default async function MeasurementPage({ params }: { params: Promise<{ id: string }> }) {
  const { id } = await params;
  if (!z.uuid().safeParse(id).success) notFound();
  const { actor } = await requirePageActor();
  try {
    // Checks access (404 for another facility's or another researcher's measurement).
    await getMeasurement(getDb(), actor, id);
  } catch (err) {
    if (err instanceof AppError && err.code === "not_found") notFound();
    throw err;
  }
  return <MeasurementView id={id} canBaseline={can(actor, "baselines.manage")} />;
}
