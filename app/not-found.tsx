import Link from "next/link";

export default function NotFound() {
  return (
    <>
      <h1>Not found</h1>
      <p className="lede">There is no such page or site in this network. <Link href="/">Back to the network</Link>.</p>
    </>
  );
}
