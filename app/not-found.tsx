import Link from 'next/link';

export default function NotFound() {
  return (
    <div className="mx-auto max-w-lg">
      <h1 className="mb-2">Not found</h1>
      <p className="mb-3">This page does not exist, or your role does not include it.</p>
      <Link href="/">Back to your studies</Link>
    </div>
  );
}
