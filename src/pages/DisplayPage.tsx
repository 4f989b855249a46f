// Placeholder: the full-screen visitor display is being built separately. It must stay free
// of buttons and form controls (CONTRACT.md §7).
export default function DisplayPage() {
  return (
    <main className="flex min-h-screen items-center justify-center p-8 text-center">
      <div>
        <h1 className="text-3xl font-bold">Blocklight</h1>
        <p className="mt-2 text-ink-soft">The visitor display for this link is coming soon.</p>
      </div>
    </main>
  );
}
