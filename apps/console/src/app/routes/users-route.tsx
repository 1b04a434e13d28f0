import { useCurrentUser } from "../../lib/session.ts";
import { UsersPage } from "../../features/users/components/users-page.tsx";

export default function UsersRoute() {
  const user = useCurrentUser();
  return (
    <>
      <title>Users · Jogwright</title>
      <UsersPage currentUserId={user.id} />
    </>
  );
}
