import { LivePage } from "../../features/drive/components/live-page.tsx";

export default function LiveRoute() {
  return (
    <>
      <title>Live sessions · Jogwright</title>
      <LivePage />
    </>
  );
}
