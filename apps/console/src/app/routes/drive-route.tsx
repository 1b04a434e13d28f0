import { DrivePage } from "../../features/drive/components/drive-page.tsx";

export default function DriveRoute() {
  return (
    <>
      <title>Drive · Jogwright</title>
      <DrivePage />
    </>
  );
}
