// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "velocities",
  summary: "",
  help: "peculiar velocities: not built yet",
  run: async () => {
    throw usageError("'velocities' is not built yet");
  },
};
export default command;
