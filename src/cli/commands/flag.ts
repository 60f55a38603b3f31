// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "flag",
  summary: "",
  help: "peculiar flag: not built yet",
  run: async () => {
    throw usageError("'flag' is not built yet");
  },
};
export default command;
