// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "inspect",
  summary: "",
  help: "peculiar inspect: not built yet",
  run: async () => {
    throw usageError("'inspect' is not built yet");
  },
};
export default command;
