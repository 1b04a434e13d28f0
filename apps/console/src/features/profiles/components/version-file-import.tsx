import { useId, useRef, useState } from "react";
import { Upload } from "lucide-react";
import type { ProfileVersion, VersionFile } from "@jogwright/shared";
import { Message } from "../../../components/ui/message.tsx";
import { shortHash } from "../../../components/profiles/version-state-badge.tsx";
import { describeError } from "../../../lib/api-client.ts";
import { checkVersionFileSize, importedTitle, importRefusalOf, readVersionFile, type VersionFileProblem } from "../forms/version-file.ts";
import { useImportVersionFile } from "../hooks/use-profiles.ts";

/** What the last import came to; shown under the version list's title until the next one. */
type ImportOutcome =
  | { kind: "sending"; fileName: string }
  | { kind: "refused"; title: string; message: string; problems: VersionFileProblem[]; isServer: boolean }
  | { kind: "imported"; fileName: string; file: VersionFile; version: ProfileVersion };

/**
 * "Import a version file…" (engineers, issue 12): the chosen file is read in the browser and checked with
 * the shared versionFileSchema (a file that is not a version file is refused here, nothing sent), then
 * `POST /api/profiles/:id/import`, which saves it as a new draft or refuses it (a changed hash, another arm,
 * above the ceilings) with nothing saved. `onImported` lets the page select the new draft.
 */
export function useVersionFileImport(profileId: number, onImported: (version: ProfileVersion) => void) {
  const importFile = useImportVersionFile(profileId);
  const [outcome, setOutcome] = useState<ImportOutcome | null>(null);

  const choose = async (chosen: File) => {
    const refused = (reading: { title: string; message: string; problems: VersionFileProblem[] }) => setOutcome({ kind: "refused", ...reading, isServer: false });
    const tooLarge = checkVersionFileSize(chosen.name, chosen.size);
    if (tooLarge && !tooLarge.isVersionFile) return refused(tooLarge);
    let text: string;
    try {
      text = await chosen.text();
    } catch (cause) {
      return refused({ title: `Could not read ${chosen.name}`, message: describeError(cause), problems: [] });
    }
    const reading = readVersionFile(text, chosen.name);
    if (!reading.isVersionFile) return refused(reading);
    setOutcome({ kind: "sending", fileName: chosen.name });
    importFile.mutate(
      { body: reading.body, fileName: chosen.name },
      {
        onSuccess: (version) => {
          setOutcome({ kind: "imported", fileName: chosen.name, file: reading.file, version });
          onImported(version);
        },
        onError: (error) => setOutcome({ kind: "refused", ...importRefusalOf(error, chosen.name), isServer: true }),
      },
    );
  };

  return { choose, outcome, isPending: importFile.isPending };
}

/** The file picker, as a button: a label for a visually hidden file input (keyboard and screen readers reach the input). */
export function ImportVersionFileButton({ onChoose, isPending }: { onChoose: (file: File) => void; isPending: boolean }) {
  const inputId = useId();
  const input = useRef<HTMLInputElement>(null);
  return (
    <span className="inline-flex">
      <input
        ref={input}
        id={inputId}
        type="file"
        accept=".json,application/json"
        className="peer sr-only"
        data-testid="version-file"
        disabled={isPending}
        onChange={(event) => {
          const chosen = event.target.files?.[0];
          // Cleared at once, so choosing the same file again (after fixing it) is a change too.
          event.target.value = "";
          if (chosen) onChoose(chosen);
        }}
      />
      <label
        htmlFor={inputId}
        className="inline-flex h-9 cursor-pointer items-center gap-2 rounded-md border border-ink-600 bg-ink-800 px-4 text-sm font-semibold whitespace-nowrap text-ink-100 peer-focus-visible:outline-2 peer-focus-visible:outline-iris-400 peer-disabled:cursor-not-allowed peer-disabled:text-ink-400 hover:border-ink-400"
      >
        <Upload aria-hidden className="size-4" /> {isPending ? "Importing…" : "Import a version file…"}
      </label>
    </span>
  );
}

/** The last import's outcome: the new draft, or the refusal in words with each problem by its label. */
export function VersionFileImportOutcome({ outcome }: { outcome: ImportOutcome | null }) {
  if (!outcome) return null;
  if (outcome.kind === "sending") return <Message>Importing {outcome.fileName}…</Message>;
  if (outcome.kind === "imported") {
    const { file, version } = outcome;
    return (
      <div data-testid="version-import-outcome">
        <Message tone="ok" title={importedTitle(version, outcome.fileName)}>
          From “{file.profile.name}” v{file.version.number}, {file.arm.name} revision {file.arm.revision}
          {file.tool ? ` with “${file.tool.name}”` : ""}; parameters and SHA-256 <span className="num">{shortHash(version.paramsSha256)}</span> as in the file. It is
          selected below and opened in Compare versions; submit it for review when it is ready.
        </Message>
      </div>
    );
  }
  return (
    <div data-testid="version-import-outcome">
      <Message tone="stop" title={outcome.title}>
        <p>{outcome.message}</p>
        {outcome.problems.length > 0 ? (
          <ul className="mt-1 list-disc pl-4">
            {outcome.problems.map((p, i) => (
              <li key={`${p.path}-${i}`}>
                {p.label ? <strong>{p.label}</strong> : null}
                {p.label ? ": " : null}
                {p.message}
              </li>
            ))}
          </ul>
        ) : null}
        {outcome.isServer ? null : <p className="mt-1 text-ink-300">Nothing was sent to the server.</p>}
      </Message>
    </div>
  );
}
