import { getDb } from "@/lib/db/client";
import { listApiTokens } from "@/lib/auth/api-tokens";
import { formatTimestamp } from "@/lib/format/timestamp";
import { requirePageActor } from "../../_server/current-actor";
import { CreateTokenForm } from "./create-token-form";
import { RevokeTokenForm } from "./revoke-token-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "API tokens" };

export default async function TokensPage() {
  const actor = await requirePageActor("token.manage_own");
  const tokens = await listApiTokens(getDb(), actor.userId!);
  return (
    <>
      <h1>API tokens</h1>
      <p className="lede">
        Tokens let scripts use the JSON API (for example a nightly upload) without your password. A token acts with your role
        ({actor.role?.replace("_", " ")}) on your sites only, and stops working the moment you revoke it or your account is
        deactivated. Each token is shown once, when it is created.
      </p>
      <CreateTokenForm />
      <h2>Your tokens</h2>
      {tokens.length === 0 ? (
        <p className="empty">No tokens yet.</p>
      ) : (
        <table className="data">
          <thead>
            <tr>
              <th scope="col">Name</th>
              <th scope="col">Starts with</th>
              <th scope="col">Created</th>
              <th scope="col">Last used</th>
              <th scope="col">Status</th>
            </tr>
          </thead>
          <tbody>
            {tokens.map((token) => (
              <tr key={token.id}>
                <td>{token.name}</td>
                <td><code>{token.prefix}…</code></td>
                <td>{formatTimestamp(token.createdAt)}</td>
                <td>{token.lastUsedAt ? formatTimestamp(token.lastUsedAt) : "never"}</td>
                <td>{token.revokedAt ? <span className="badge superseded">revoked {formatTimestamp(token.revokedAt)}</span> : <RevokeTokenForm tokenId={token.id} name={token.name} />}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </>
  );
}
