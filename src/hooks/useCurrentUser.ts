import type { UserDto } from "@shared/contract/rest";
import { useMe } from "../api/auth";

/**
 * The signed-in user inside the shell. RequireAuth has already waited for /api/me,
 * so pages below it can rely on a user being present.
 */
export function useCurrentUser(): UserDto {
  const me = useMe();
  if (!me.data) throw new Error("useCurrentUser used outside RequireAuth");
  return me.data;
}
