// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "flow",
  summary: "",
  help: "peculiar flow: not built yet",
  run: async () => {
    throw usageError("'flow' is not built yet");
  },
};
export default command;
