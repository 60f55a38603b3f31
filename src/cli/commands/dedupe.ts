// Placeholder until this command lands; replaced by its owner.
import type { Command } from "../command.js";
import { usageError } from "../../errors.js";

const command: Command = {
  name: "dedupe",
  summary: "",
  help: "peculiar dedupe: not built yet",
  run: async () => {
    throw usageError("'dedupe' is not built yet");
  },
};
export default command;
