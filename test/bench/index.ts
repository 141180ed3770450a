/**
 * Runs every benchmark in order (npm run bench). Each benchmark is one file exporting an async
 * function that prints its own table; add a line here for a new one.
 */
import { runDemoNetworkBenchmark } from "./demo-network.bench";
import { runEstimatesBenchmark } from "./estimates.bench";
import { runMultilevelBenchmark } from "./multilevel.bench";
import { runPoolBenchmark } from "./pool.bench";
import { runResultsPageBenchmark } from "./results-page.bench";
import { runSensitivityBenchmark } from "./sensitivity.bench";
import { runUploadBenchmark } from "./upload.bench";

const BENCHMARKS: Array<() => Promise<void>> = [runDemoNetworkBenchmark, runEstimatesBenchmark, runPoolBenchmark, runMultilevelBenchmark, runSensitivityBenchmark, runUploadBenchmark, runResultsPageBenchmark];

for (const benchmark of BENCHMARKS) await benchmark();
