import { useParams } from "react-router-dom";
import { SafetyNote } from "../components/ui/SafetyNote";

// Placeholder: the live mimic and control room are being built separately.
export default function LivePage() {
  const { slug } = useParams();
  return (
    <div className="space-y-4">
      <h1 className="text-2xl font-bold">Live — {slug}</h1>
      <p className="text-ink-soft">The live mimic for this layout is coming soon.</p>
      <SafetyNote />
    </div>
  );
}
