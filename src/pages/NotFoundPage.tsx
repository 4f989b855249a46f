import { Link } from "react-router-dom";
import { paths } from "../lib/paths";

export default function NotFoundPage() {
  return (
    <div className="space-y-3">
      <h1 className="text-2xl font-bold">Nothing here</h1>
      <p className="text-ink-soft">This page does not exist.</p>
      <Link to={paths.layouts()} className="text-brass underline">
        Back to the layouts
      </Link>
    </div>
  );
}
