#!/usr/bin/python3
"""First Pareto front of score matrices, computed by DEAP as an outside reference.

Source: DEAP (Distributed Evolutionary Algorithms in Python), Debian package python3-deap,
function deap.tools.sortLogNondominated (Fortin, Grenier & Parizeau's generalised
reduced-run-time non-dominated sort) with first_front_only=True.

DEAP maximises weighted fitness, so minimised criteria get weight -1 and maximised ones +1.
Exact duplicates: sortLogNondominated first groups the individuals by their exact weighted
fitness tuple (a dict keyed by `fitness.wvalues`) and sorts the distinct tuples only, then hands
every individual of a tuple the tuple's front. So equal vectors never dominate each other and all
copies of an efficient vector are in the first front, as in shared/utils/pareto.ts. Python tuples
also treat 0.0 and -0.0 as equal, as the TypeScript code does.

Input: JSON from the file named by the first argument, or from stdin:
  {"cases": [{"n": 3, "p": 2, "directions": ["min", "max"], "scores": [row-major numbers],
              "repeat": 1}]}
Output: JSON on stdout:
  {"deap": "<version>", "results": [{"front": [sorted row indices], "seconds": <median>}]}
where seconds is the median over `repeat` calls of sortLogNondominated alone, timed with
time.perf_counter (building the individuals and starting Python are not counted).
Exit status 3 with a message on stderr when deap cannot be imported.
"""
import json
import statistics
import sys
import time

try:
    import deap
    from deap import base, creator, tools
except ImportError as error:  # the vitest test turns this into a failure, never a skip
    sys.stderr.write(
        "deap_front.py: /usr/bin/python3 cannot import deap (%s); "
        "install the Debian package python3-deap\n" % error
    )
    sys.exit(3)


def first_front(case_number, case):
    n, p = case["n"], case["p"]
    directions, scores = case["directions"], case["scores"]
    if len(directions) != p or len(scores) != n * p:
        raise ValueError("case %d: shape does not match" % case_number)
    weights = tuple(-1.0 if d == "min" else 1.0 for d in directions)
    # One creator class per case, since DEAP fixes the weights on the class.
    fitness_name = "FitnessCase%d" % case_number
    individual_name = "IndividualCase%d" % case_number
    creator.create(fitness_name, base.Fitness, weights=weights)
    creator.create(individual_name, list, fitness=getattr(creator, fitness_name))
    make = getattr(creator, individual_name)
    population = []
    for i in range(n):
        individual = make([i])
        individual.fitness.values = tuple(float(v) for v in scores[i * p:(i + 1) * p])
        population.append(individual)
    index_of = {id(individual): i for i, individual in enumerate(population)}
    timings = []
    front = []
    for _ in range(max(1, int(case.get("repeat", 1)))):
        start = time.perf_counter()
        front = tools.sortLogNondominated(population, k=len(population), first_front_only=True)
        timings.append(time.perf_counter() - start)
    return {"front": sorted(index_of[id(individual)] for individual in front),
            "seconds": statistics.median(timings)}


def main():
    if len(sys.argv) > 1:
        with open(sys.argv[1], encoding="utf-8") as handle:
            request = json.load(handle)
    else:
        request = json.load(sys.stdin)
    results = [first_front(k, case) for k, case in enumerate(request["cases"])]
    json.dump({"deap": getattr(deap, "__version__", "unknown"), "results": results}, sys.stdout)
    sys.stdout.write("\n")


if __name__ == "__main__":
    main()
