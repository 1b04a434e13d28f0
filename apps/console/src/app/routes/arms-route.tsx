import { ArmsPage } from "../../features/arms/components/arms-page.tsx";

export default function ArmsRoute() {
  return (
    <>
      <title>Arms · Jogwright</title>
      <ArmsPage />
    </>
  );
}
