import { UsersPage } from "../../features/users/components/users-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Users", (user) => <UsersPage currentUserId={user.id} />);
