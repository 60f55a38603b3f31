// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "groups",
  summary: "",
  help: "peculiar groups: not built yet",
  run: async () => {
    throw usageError("'groups' is not built yet");
  },
};
export default command;
