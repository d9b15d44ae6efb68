"""Backup benchmark: backup_create and backup_restore beside dumpdata and loaddata, same data.

Run with ``python bench/backup_bench.py`` (``make bench``); ``--quick`` seeds a smaller shop.
For SQLite and PostgreSQL in turn, in databases of their own created and dropped here (as in
bench/load_bench.py): seed a large shop (``manage.py seed_large``) into one database, then time

- ``shop.core.backup.backup_create`` of it, and Django's ``dumpdata`` of the same data (JSON,
  natural keys, content types and permissions left out: the usual portable recipe);
- ``shop.core.backup.backup_restore`` of the archive into a second, freshly migrated database,
  and ``loaddata`` of the dump into a third;

and check that both copies hold as many records of every model as the original. Each step runs
in a child process whose environment names its database; only the call itself is timed. While
backup_create runs, another connection writes one cache row (a write like any other, outside
the models so the counts stay comparable): its time is printed beside the same write alone.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import threading
import time
from pathlib import Path

from load_bench import BIN, DATABASES, FULL, QUICK, ROOT, Sizes, child_env, database, run, seed

# dumpdata as Django's documentation suggests for a copy that loads into another database.
DUMPDATA_OPTIONS = {
    "natural_foreign": True,
    "natural_primary": True,
    "exclude": ["contenttypes", "auth.permission"],
}
RESULT_PREFIX = "BACKUP_BENCH "
# How long after backup_create starts the concurrent write is made (within the dump).
WRITE_AFTER_SECONDS = 0.5


# Children: one timed call against the database their environment names ----------------------


def child(step: str, path: Path) -> None:
    """Run one step and print its figures as one JSON line."""
    sys.path.insert(0, str(ROOT))
    import django

    django.setup()
    from django.core.management import call_command

    from shop.core.backup import backed_up_models, backup_create, backup_restore

    figures: dict = {}
    if step == "create":
        figures["write_alone"] = timed_write_in_thread("alone", delay=0.0)
        during: dict = {}
        writer = threading.Thread(
            target=lambda: during.update(
                seconds=timed_write_in_thread("during", delay=WRITE_AFTER_SECONDS)
            )
        )
        writer.start()
    start = time.perf_counter()
    if step == "create":
        figures["records"] = backup_create(path=path).total_records
    elif step == "restore":
        figures["records"] = backup_restore(path=path).total_records
    elif step == "dumpdata":
        call_command("dumpdata", output=str(path), verbosity=0, **DUMPDATA_OPTIONS)
    elif step == "loaddata":
        call_command("loaddata", str(path), verbosity=0)
    figures["seconds"] = time.perf_counter() - start
    if step == "create":
        writer.join()
        figures["write_during"] = during["seconds"]
    if step in {"create", "dumpdata"}:
        figures["bytes"] = path.stat().st_size
    figures["counts"] = {
        model._meta.label_lower: model._base_manager.count() for model in backed_up_models()
    }
    print(RESULT_PREFIX + json.dumps(figures))


def timed_write_in_thread(key: str, delay: float) -> float | str:
    """Seconds one cache write takes on a connection of its own, or why it failed."""
    from django.core.cache import cache
    from django.db import connections

    outcome: dict = {}

    def write() -> None:
        time.sleep(delay)
        start = time.perf_counter()
        try:
            cache.set(f"backup-bench-{key}", time.time(), 60)
            outcome["value"] = time.perf_counter() - start
        except Exception as exc:  # the failure is the figure
            outcome["value"] = f"failed after {time.perf_counter() - start:.1f} s: {exc}"
        finally:
            connections.close_all()

    thread = threading.Thread(target=write)
    thread.start()
    thread.join()
    return outcome["value"]


def step(env: dict, name: str, path: Path) -> dict:
    _, last = run([str(BIN / "python"), __file__, "--child", name, str(path)], env)
    return json.loads(last.removeprefix(RESULT_PREFIX))


# The parent -----------------------------------------------------------------------------------


def bench_database(kind: str, sizes: Sizes) -> dict:
    python = str(BIN / "python")
    pid = os.getpid()
    figures: dict = {}
    with database(kind, f"bench_backup_{pid}_a") as (url, folder):
        env = child_env(url, folder)
        print(f"  {kind}: migrate and seed_large (every 10th progress line)", flush=True)
        _, figures["seed"], _ = seed(env, sizes, python)
        archive, dump = folder / "shop-backup.zip", folder / "dump.json"
        print(f"  {kind}: backup_create, dumpdata", flush=True)
        figures["create"] = step(env, "create", archive)
        figures["dumpdata"] = step(env, "dumpdata", dump)
        original = figures["create"]["counts"]
        for name, suffix, action in (("restore", "b", "restore"), ("loaddata", "c", "loaddata")):
            source = archive if action == "restore" else dump
            with database(kind, f"bench_backup_{pid}_{suffix}") as (copy_url, copy_folder):
                copy_env = child_env(copy_url, copy_folder)
                print(f"  {kind}: migrate a new database, {action}", flush=True)
                run([python, "manage.py", "migrate", "--no-input"], copy_env)
                figures[name] = step(copy_env, action, source)
                figures[name]["same_counts"] = figures[name]["counts"] == original
    figures["records"] = sum(original.values())
    return figures


def print_table(results: dict, sizes: Sizes, label: str) -> None:
    kinds = list(results)
    width = 40
    print()
    print(
        f"Backup benchmark ({label}: {sizes.jobs:,} jobs, {sizes.readings:,} readings, "
        f"{sizes.certificates:,} certificates; a database each, created and dropped)"
    )
    print(f"{'':<40}" + "".join(f"{kind:<{width}}" for kind in kinds))

    def row(name: str, cell) -> None:
        print(f"{name:<40}" + "".join(f"{cell(results[kind]):<{width}}" for kind in kinds))

    def written(entry: dict, baseline: dict) -> str:
        return (
            f"{entry['seconds']:.1f} s ({entry['seconds'] / baseline['seconds']:.2f}x), "
            f"{entry['bytes'] / 1e6:.1f} MB"
        )

    def loaded(entry: dict, baseline: dict) -> str:
        same = "same counts" if entry["same_counts"] else "COUNTS DIFFER"
        return f"{entry['seconds']:.1f} s ({entry['seconds'] / baseline['seconds']:.2f}x), {same}"

    row("records (all models)", lambda r: f"{r['records']:,} (seeded in {r['seed']:.0f} s)")
    row("dumpdata, JSON (baseline)", lambda r: written(r["dumpdata"], r["dumpdata"]))
    row("backup_create, zip + SHA-256", lambda r: written(r["create"], r["dumpdata"]))
    row(
        "a write during backup_create",
        lambda r: write_figure(r["create"]["write_during"], r["create"]["write_alone"]),
    )
    row("loaddata into a new db (baseline)", lambda r: loaded(r["loaddata"], r["loaddata"]))
    row("backup_restore into a new db", lambda r: loaded(r["restore"], r["loaddata"]))
    print("  (ratio: time against the baseline in the same run; 2 shared cores: noisy)")


def write_figure(during, alone) -> str:
    if isinstance(during, str) or isinstance(alone, str):
        return f"{during} (alone: {alone})"
    return f"{during * 1000:.1f} ms (alone: {alone * 1000:.1f} ms)"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="a smaller shop")
    parser.add_argument(
        "--databases", default=",".join(DATABASES), help="comma-separated: sqlite,postgresql"
    )
    parser.add_argument("--child", nargs=2, metavar=("STEP", "PATH"), help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.child:
        child(args.child[0], Path(args.child[1]))
        return 0
    sizes = QUICK if args.quick else FULL
    started = time.perf_counter()
    results, failed = {}, []
    for kind in args.databases.split(","):
        print(f"Backup benchmark on {kind}", flush=True)
        try:
            results[kind] = bench_database(kind, sizes)
        except Exception as exc:  # report it, and carry on with the other database
            failed.append(f"{kind}: {exc}")
    if results:
        print_table(results, sizes, "quick" if args.quick else "full")
    failed += [
        f"{kind}: a copy's record counts differ from the original"
        for kind, figures in results.items()
        if not (figures["restore"]["same_counts"] and figures["loaddata"]["same_counts"])
    ]
    for line in failed:
        print(f"NOT MEASURED {line}")
    print(f"Backup benchmark took {time.perf_counter() - started:.0f} s")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
