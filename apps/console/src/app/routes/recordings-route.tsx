import { RecordingsPage } from "../../features/recordings/components/recordings-page.tsx";

export default function RecordingsRoute() {
  return (
    <>
      <title>Recordings · Jogwright</title>
      <RecordingsPage />
    </>
  );
}
