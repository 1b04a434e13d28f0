import { BenchPage } from "../../features/bench/components/bench-page.tsx";

export default function BenchRoute() {
  return (
    <>
      <title>Tuning bench · Jogwright</title>
      <BenchPage />
    </>
  );
}
