// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "combine",
  summary: "",
  help: "peculiar combine: not built yet",
  run: async () => {
    throw usageError("'combine' is not built yet");
  },
};
export default command;
