import { useId, useState, type ChangeEvent } from "react";
import { parseInputList, type InputList } from "../../lib/simulation";

interface InputLoaderProps {
  onLoad: (list: InputList, name: string) => void;
}

/** Reads a JSON list of inputs (or a counterexample) from a file, in the browser. */
export function InputLoader({ onLoad }: InputLoaderProps) {
  const id = useId();
  const [error, setError] = useState<string | null>(null);

  const onFile = async (event: ChangeEvent<HTMLInputElement>) => {
    setError(null);
    const file = event.target.files?.[0];
    if (!file) return;
    try {
      onLoad(parseInputList(JSON.parse(await file.text())), file.name);
    } catch (cause) {
      setError(`${file.name}: ${cause instanceof Error ? cause.message : String(cause)}`);
    }
    // Let the same file be picked again after editing it.
    event.target.value = "";
  };

  return (
    <div className="space-y-1 text-sm">
      <label htmlFor={id} className="block font-semibold text-ink-soft">
        Load inputs from a JSON file
      </label>
      <input
        id={id}
        type="file"
        accept="application/json,.json"
        onChange={onFile}
        className="block text-ink-soft file:mr-3 file:rounded-md file:border file:border-panel-600 file:bg-panel-800 file:px-3 file:py-1 file:text-ink"
      />
      <p className="text-xs text-ink-faint">
        A list like <code>[{`{"type":"pulse","detector":"MA","at":0}`}, {`{"type":"tick","at":5000}`}]</code>, or a prover counterexample.
      </p>
      {error ? (
        <p role="alert" className="text-notice-error">
          {error}
        </p>
      ) : null}
    </div>
  );
}
