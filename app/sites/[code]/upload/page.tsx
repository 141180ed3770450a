import Link from "next/link";
import { notFound } from "next/navigation";
import { getDb } from "@/lib/db/client";
import { requirePageActor } from "../../../_server/current-actor";
import { UploadForm } from "./upload-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "Upload" };

export default async function UploadPage({ params }: { params: Promise<{ code: string }> }) {
  const code = decodeURIComponent((await params).code);
  const site = await getDb().site.findUnique({ where: { code }, select: { id: true, code: true, name: true, dateConvention: true } });
  if (!site) notFound();
  await requirePageActor("submission.create", { siteId: site.id });
  return (
    <>
      <p className="muted"><Link href="/">Network</Link> / <Link href={`/sites/${encodeURIComponent(site.code)}`}>{site.code}</Link> / upload</p>
      <h1>Upload to {site.name}</h1>
      <p className="lede">Check a file first: every problem is listed with its row and column, and nothing is written until you accept a file with none. A new file replaces the site&apos;s current one of its kind; earlier versions are kept and can be restored.</p>
      <UploadForm siteCode={site.code} dateConvention={site.dateConvention} />
    </>
  );
}
