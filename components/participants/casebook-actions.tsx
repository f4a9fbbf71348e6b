'use client';
import { useState } from 'react';
import { useRouter } from 'next/navigation';
import { RandomisePanel } from './randomise-panel';
import { UnblindPanel } from './unblind-panel';
import { SignPanel } from './sign-panel';

/** The casebook's actions for the roles that have them: randomise (coordinator), emergency unblinding (allowed roles). */
export function CasebookActions({ api, canRandomise, canUnblind, canSign }: { api: string; canRandomise: boolean; canUnblind: boolean; canSign: boolean }) {
  const router = useRouter();
  // Stays mounted after randomising, so the allocation shown stays on screen when the page refreshes.
  const [showRandomise] = useState(canRandomise);
  return (
    <div className="flex flex-col gap-3">
      {showRandomise && <RandomisePanel url={`${api}/randomise`} onDone={() => router.refresh()} />}
      {canUnblind && <UnblindPanel url={`${api}/unblind`} />}
      <SignPanel url={`${api}/signatures`} canSign={canSign} />
    </div>
  );
}
