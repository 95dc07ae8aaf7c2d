#!/bin/bash
# Submit a sharded concordat run of RECIPE to Slurm: an array of N shard
# tasks, and the merge as a job that starts only once all of them have
# succeeded (--dependency=afterok). Prints the two job ids.
#
#   recipes/slurm/submit.sh RECIPE [N]      # N defaults to 4
#
# Extra sbatch options (a partition, an account) go in SBATCH_OPTIONS,
# e.g. SBATCH_OPTIONS="--partition=short --account=lab42". The jobs run in
# the current folder; CONCORDAT names the program if it is not on the PATH
# (sbatch passes the environment on to the jobs).
set -euo pipefail

recipe=${1:?usage: submit.sh RECIPE [N]}
n=${2:-4}
here=$(cd "$(dirname "$0")" && pwd)
# shellcheck disable=SC2086 # SBATCH_OPTIONS is a list of options
array=$(sbatch --parsable ${SBATCH_OPTIONS:-} --array="1-$n" "$here/shards.sbatch" "$recipe")
array=${array%%;*} # "id;cluster" on a multi-cluster installation
# shellcheck disable=SC2086
merge=$(sbatch --parsable ${SBATCH_OPTIONS:-} --dependency="afterok:$array" --kill-on-invalid-dep=yes "$here/merge.sbatch" "$recipe")
merge=${merge%%;*}
echo "shards: job $array (array 1-$n); merge: job $merge (after all shards succeed)"
