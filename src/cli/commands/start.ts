// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "start",
  summary: "",
  help: "peculiar start: not built yet",
  run: async () => {
    throw usageError("'start' is not built yet");
  },
};
export default command;
