/** The frame of the signed-out pages: name, one card, the research-use line. */
import { Caution } from '@/components/Caution';

export function AuthFrame({ title, children }: { title: string; children: React.ReactNode }) {
  return (
    <div className="min-h-screen flex flex-col items-center justify-center px-4 py-10">
      <div className="w-full max-w-sm">
        <header className="mb-6 text-center">
          <div className="text-3xl font-bold tracking-tight text-accent-dark">Syntopy</div>
          <p className="mt-1 text-sm text-ink-soft">Where two labels meet: cell-by-cell co-localization, reviewed and reported.</p>
        </header>
        <main className="rounded-lg border border-ink/10 bg-white p-6 shadow-sm">
          <h1 className="mb-4 text-xl">{title}</h1>
          {children}
        </main>
        <footer>
          <Caution tone="info" className="mt-6">
            Research use only; not for diagnosis.
          </Caution>
        </footer>
      </div>
    </div>
  );
}
