/** The product's cautions, shown on every page. */
export function Cautions() {
  return (
    <footer className="border-t border-line bg-paper-sunk" aria-labelledby="cautions-title">
      <div className="mx-auto max-w-page px-4 py-3 text-xs text-ink-soft">
        <h2 id="cautions-title" className="mb-1 text-xs font-semibold uppercase tracking-wide text-ink">
          Cautions
        </h2>
        <p>
          Excursion captures research data under an approved protocol. It is not a medical device and gives no clinical advice:
          treatment decisions belong to the treating clinician and the protocol. Ethics approval, local codes and data-protection law
          govern its use. Loads on a repaired tendon must stay below the strength of the repair; any figure shown about that is an
          orientation for the research team, never a prescription.
        </p>
      </div>
    </footer>
  );
}
