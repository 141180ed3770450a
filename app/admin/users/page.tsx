import { getDb } from "@/lib/db/client";
import { listUsers } from "@/lib/users/manage-users";
import { requirePageActor } from "../../_server/current-actor";
import { CreateUserForm } from "./create-user-form";
import { UserRowForm } from "./user-row-form";

export const dynamic = "force-dynamic";
export const metadata = { title: "Accounts" };

export default async function UsersPage() {
  const actor = await requirePageActor("user.manage");
  const db = getDb();
  const [users, sites] = await Promise.all([listUsers(db, actor), db.site.findMany({ select: { code: true }, orderBy: { code: "asc" } })]);
  const siteCodes = sites.map((s) => s.code);
  return (
    <>
      <h1>Accounts</h1>
      <p className="lede">
        Who may sign in, with which role, and which sites each site lead leads. A site lead may upload, restore and withdraw
        only their own sites&apos; submissions and edit those sites&apos; metadata. A deactivated account is signed out at once
        and kept, so the audit trail still names it.
      </p>
      <table className="data">
        <caption>{users.length} accounts</caption>
        <thead>
          <tr>
            <th scope="col">Account</th>
            <th scope="col" colSpan={4}>Role, sites led, status</th>
          </tr>
        </thead>
        <tbody>
          {users.map((user) => (
            <UserRowForm key={user.id} user={{ ...user, sitesLed: user.sitesLed.map((s) => s.code) }} siteCodes={siteCodes} />
          ))}
        </tbody>
      </table>
      <h2>New account</h2>
      <CreateUserForm />
    </>
  );
}
