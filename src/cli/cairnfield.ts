/** Entry point of the `cairnfield` command line (see main.ts). */
import { main } from './main';

process.exitCode = await main(process.argv.slice(2));
