#!/usr/bin/env bash
# Slurm job array: each task runs one deterministic shard of the archive; a final job
# merges them. Submit from the project folder:
#   jobid=$(sbatch --parsable --array=1-16 scripts/cluster/slurm-batch.sh /data/plots results)
#   sbatch --dependency=afterany:$jobid --wrap "build/stipple merge results/shard-* --out results/all && build/stipple report results/all"
# (afterany: a shard whose inputs partly failed exits 1 but still wrote its tables and failures.csv)
#SBATCH --job-name=stipple-batch
#SBATCH --cpus-per-task=4
#SBATCH --time=02:00:00
#SBATCH --output=stipple-%A_%a.log
set -euo pipefail
archive=${1:?usage: slurm-batch.sh ARCHIVE_DIR OUT_DIR}
out=${2:?usage: slurm-batch.sh ARCHIVE_DIR OUT_DIR [batch options...]}
: "${SLURM_ARRAY_TASK_ID:?run as a job array (sbatch --array=1-N)}"
: "${SLURM_ARRAY_TASK_COUNT:?run as a job array (sbatch --array=1-N)}"
"${STIPPLE:-build/stipple}" batch "$archive" --out "$out/shard-$SLURM_ARRAY_TASK_ID" \
  --shard "$SLURM_ARRAY_TASK_ID/$SLURM_ARRAY_TASK_COUNT" --threads "${SLURM_CPUS_PER_TASK:-1}" --gis "${@:3}"
