// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "run",
  summary: "",
  help: "peculiar run: not built yet",
  run: async () => {
    throw usageError("'run' is not built yet");
  },
};
export default command;
