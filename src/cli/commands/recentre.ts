// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "recentre",
  summary: "",
  help: "peculiar recentre: not built yet",
  run: async () => {
    throw usageError("'recentre' is not built yet");
  },
};
export default command;
