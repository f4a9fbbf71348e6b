'use client';

export default function ErrorPage({ error, reset }: { error: Error & { digest?: string }; reset: () => void }) {
  return (
    <div className="mx-auto max-w-lg">
      <h1 className="mb-2">Something went wrong</h1>
      <p className="mb-3">
        The page could not be shown. Nothing you had already saved is lost.{error.digest ? ` Reference: ${error.digest}.` : ''}
      </p>
      <button type="button" className="btn" onClick={reset}>
        Try again
      </button>
    </div>
  );
}
