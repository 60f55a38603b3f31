// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "view",
  summary: "",
  help: "peculiar view: not built yet",
  run: async () => {
    throw usageError("'view' is not built yet");
  },
};
export default command;
