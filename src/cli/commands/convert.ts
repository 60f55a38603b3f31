// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "convert",
  summary: "",
  help: "peculiar convert: not built yet",
  run: async () => {
    throw usageError("'convert' is not built yet");
  },
};
export default command;
