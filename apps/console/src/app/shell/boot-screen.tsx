import { Loading } from "../../components/ui/loading.tsx";

/** Shown while the console starts (first route module, first session check). */
export function BootScreen() {
  return (
    <div className="grid min-h-dvh place-items-center">
      <Loading label="Starting Jogwright…" />
    </div>
  );
}
