// `pleat schema`: prints the JSON Schema of the design format, for editors and other tools.
import type { Command } from 'commander';
import type { RegisterCommand } from '../context';

export const register: RegisterCommand = (program: Command) => {
  program
    .command('schema')
    .description('print the JSON Schema of the design file format (pleat/1)')
    .action(async () => {
      const { designSchema } = await import('../../shared/design/schema');
      process.stdout.write(`${JSON.stringify(designSchema, null, 2)}\n`);
    });
};
