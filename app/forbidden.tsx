import Link from "next/link";

export default function Forbidden() {
  return (
    <main className="mx-auto max-w-form px-4 py-24">
      <h1 className="text-lg font-semibold">Not permitted</h1>
      <p className="mt-2 text-sm text-muted">Your roles do not include access to this page.</p>
      <Link href="/" className="mt-4 inline-block text-sm text-accent underline">
        Back to the catalogue
      </Link>
    </main>
  );
}
