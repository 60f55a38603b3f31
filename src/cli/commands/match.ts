// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "match",
  summary: "",
  help: "peculiar match: not built yet",
  run: async () => {
    throw usageError("'match' is not built yet");
  },
};
export default command;
