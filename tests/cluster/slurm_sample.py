#!/usr/bin/python3
"""A sample run on a real Slurm cluster of one node, started by this test.

Starts munged (a key generated in a temporary folder), slurmctld -D and
slurmd -D (Debian's slurm-wlm; a minimal slurm.conf written here, ports
chosen free), writes a sample of invented mock galaxies with `fulcrum synth`,
writes the submission script with `fulcrum run --slurm-script`, submits it
with bash (sbatch with SLURM_CONF pointing to this cluster) and waits, with a
bound, for the merge. Then:

  --case array    the merged sample equals the unsharded run byte for byte
                  (every file; the shards/ and slurm/ working folders aside).
  --case requeue  shard 1 is killed with SIGKILL while it runs (once one of
                  its galaxies is in its staging folder), the merge stays
                  pending, `fulcrum merge` by hand refuses the sample naming
                  shard 1, the shard is submitted again with `bash SCRIPT 1`
                  (sbatch; Slurm keeps a dependency that saw a failed task
                  failed, so `scontrol requeue` alone would leave the merge
                  waiting) and the final merge still equals the unsharded
                  run byte for byte.
  --case slurm-requeue
                  shard 1 is requeued with `scontrol requeue` while it runs
                  (once one of its galaxies is in its staging folder; Slurm
                  ends it and starts it again), the merge waits for it and
                  still equals the unsharded run byte for byte.

The cluster is shut down by the PIDs this test started, also on failure.
Exit 77 (CTest: skipped) with the reason when the daemons cannot start here:
not root, a missing program, munged or slurmd refusing to start.
"""
import argparse
import glob
import os
import signal
import socket
import subprocess
import sys
import tempfile
import time

SKIP = 77
EPOCH = "1700000000"
WAIT_SECONDS = 150  # bound for every wait
# Every wait also ends by this time, so the test fails (and stops its
# cluster) itself before CTest's limit of 180 s.
DEADLINE = time.monotonic() + 160
PROGRAMS = ["munged", "slurmctld", "slurmd", "sbatch", "squeue", "scontrol", "scancel", "sinfo"]
FINAL_STATES = {"COMPLETED", "FAILED", "CANCELLED", "TIMEOUT", "NODE_FAIL", "OUT_OF_MEMORY", "BOOT_FAIL",
                "DEADLINE", "PREEMPTED"}


class Skip(Exception):
    pass


def free_port():
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def tail(path, n=15):
    try:
        with open(path, errors="replace") as f:
            return "".join(f.readlines()[-n:])
    except OSError:
        return "(no log)"


def wait_for(what, test, bound=WAIT_SECONDS, step=0.2, by_deadline=True):
    """Poll test() until it is true; raise naming `what` after `bound` s
    (or at DEADLINE)."""
    end = time.monotonic() + bound
    if by_deadline:
        end = min(end, DEADLINE)
    while time.monotonic() < end:
        value = test()
        if value:
            return value
        time.sleep(step)
    raise AssertionError("gave up waiting for " + what)


class Cluster:
    """munged, slurmctld and slurmd of a one-node cluster in `root`."""

    def __init__(self, root):
        self.root = root
        self.procs = []  # (name, Popen), in start order
        self.conf = os.path.join(root, "slurm.conf")
        self.env = dict(os.environ, SLURM_CONF=self.conf)

    def start(self):
        if os.geteuid() != 0:
            raise Skip("not root: slurmd and munged of the test cluster need root")
        from shutil import which
        missing = [p for p in PROGRAMS if not which(p)]
        if missing:
            raise Skip("missing " + ", ".join(missing) + " (Debian packages slurm-wlm and munge)")
        os.chmod(self.root, 0o755)  # munged wants its socket's folders open to all
        key_dir = os.path.join(self.root, "munge-key")
        run_dir = os.path.join(self.root, "run")
        for d, mode in ((key_dir, 0o700), (run_dir, 0o755), (os.path.join(self.root, "state"), 0o755),
                        (os.path.join(self.root, "spool"), 0o755)):
            os.makedirs(d)
            os.chmod(d, mode)
        key = os.path.join(key_dir, "munge.key")
        with open(key, "wb") as f:
            f.write(os.urandom(1024))
        os.chmod(key, 0o400)
        self.socket = os.path.join(run_dir, "munge.socket")
        self._start("munged", ["munged", "-F", "--key-file=" + key, "--socket=" + self.socket,
                               "--pid-file=" + os.path.join(run_dir, "munged.pid"),
                               "--log-file=" + os.path.join(key_dir, "munged.log"),
                               "--seed-file=" + os.path.join(key_dir, "munged.seed")])
        self._started("munged", lambda: os.path.exists(self.socket), os.path.join(self.root, "munged.out"))
        self._write_conf()
        self._start("slurmctld", ["slurmctld", "-D", "-f", self.conf])
        self._start("slurmd", ["slurmd", "-D", "-N", "localhost", "-f", self.conf])
        self._started("slurmd", self._node_idle, os.path.join(self.root, "slurmd.log"))

    def _start(self, name, argv):
        out = open(os.path.join(self.root, name + ".out"), "w")
        p = subprocess.Popen(argv, stdout=out, stderr=subprocess.STDOUT, stdin=subprocess.DEVNULL,
                             start_new_session=True, env=self.env)
        self.procs.append((name, p))

    def _started(self, name, ready, log):
        """Wait (bounded) for `ready`; a daemon that exits first means this
        machine cannot run the cluster: skip, with its log."""
        end = time.monotonic() + 30
        while time.monotonic() < end:
            if ready():
                return
            for n, p in self.procs:
                if p.poll() is not None:
                    raise Skip(n + " exited with " + str(p.returncode) + " while starting:\n" +
                               tail(os.path.join(self.root, n + ".out")) + tail(log))
            time.sleep(0.2)
        raise AssertionError(name + " started but the cluster did not become ready:\n" + tail(log))

    def _write_conf(self):
        with open("/proc/meminfo") as f:
            total_mb = int(next(l for l in f if l.startswith("MemTotal:")).split()[1]) // 1024
        memory = min(4096, total_mb - 512)
        if memory < 1024:
            raise Skip("less than 1.5 GB of memory for the test node")
        r = self.root
        conf = f"""ClusterName=fulcrumtest
SlurmctldHost=localhost
SlurmUser=root
SlurmdUser=root
AuthType=auth/munge
AuthInfo=socket={self.socket}
CredType=cred/munge
SlurmctldPort={free_port()}
SlurmdPort={free_port()}
StateSaveLocation={r}/state
SlurmdSpoolDir={r}/spool
SlurmctldPidFile={r}/run/slurmctld.pid
SlurmdPidFile={r}/run/slurmd.pid
SlurmctldLogFile={r}/slurmctld.log
SlurmdLogFile={r}/slurmd.log
ProctrackType=proctrack/linuxproc
TaskPlugin=task/none
JobAcctGatherType=jobacct_gather/none
AccountingStorageType=accounting_storage/none
SwitchType=switch/none
MpiDefault=none
SchedulerType=sched/builtin
SelectType=select/cons_tres
SelectTypeParameters=CR_Core
ReturnToService=2
SlurmctldTimeout=30
SlurmdTimeout=30
InactiveLimit=0
MinJobAge=600
KillWait=5
NodeName=localhost NodeHostname=localhost NodeAddr=127.0.0.1 CPUs=2 RealMemory={memory} State=UNKNOWN
PartitionName=test Nodes=localhost Default=YES MaxTime=INFINITE State=UP
"""
        with open(self.conf, "w") as f:
            f.write(conf)

    def _node_idle(self):
        r = subprocess.run(["sinfo", "-h", "-o", "%t"], env=self.env, capture_output=True, text=True)
        return r.returncode == 0 and r.stdout.strip() == "idle"

    def run(self, argv, **kw):
        return subprocess.run(argv, env=dict(self.env, **kw.pop("extra_env", {})), capture_output=True, text=True,
                              **kw)

    def job_state(self, job):
        r = self.run(["scontrol", "show", "job", str(job)])
        for word in r.stdout.split():
            if word.startswith("JobState="):
                return word.split("=", 1)[1]
        return None

    def job_reason(self, job):
        r = self.run(["scontrol", "show", "job", str(job)])
        for word in r.stdout.split():
            if word.startswith("Reason="):
                return word.split("=", 1)[1]
        return None

    def stop(self):
        """Cancel every job, then stop the daemons this test started, by PID."""
        if any(n == "slurmctld" and p.poll() is None for n, p in self.procs):
            ids = self.run(["squeue", "-h", "-o", "%A"]).stdout.split()
            if ids:
                self.run(["scancel"] + ids)
                try:
                    wait_for("the cancelled jobs to end", lambda: not self.run(["squeue", "-h"]).stdout.strip(), 20,
                             by_deadline=False)
                except AssertionError:
                    pass
        for name, p in reversed(self.procs):
            if p.poll() is None:
                os.kill(p.pid, signal.SIGTERM)
                try:
                    p.wait(15)
                except subprocess.TimeoutExpired:
                    os.kill(p.pid, signal.SIGKILL)
                    p.wait()


def fulcrum(args, argv, **kw):
    env = dict(os.environ, SOURCE_DATE_EPOCH=EPOCH, OMP_NUM_THREADS="1")
    r = subprocess.run([args.fulcrum, "--quiet"] + argv, env=env, capture_output=True, text=True, **kw)
    if r.returncode != 0:
        raise AssertionError("fulcrum " + " ".join(argv) + " failed:\n" + r.stderr)
    return r


def make_sample(args, root):
    """Four invented mock discs; the third (shard 1 of 2 with the first) is
    larger, so shard 1 is still at work after its first galaxy is written."""
    data = os.path.join(root, "data")
    sizes = [40, 40, 200, 40]
    lines = ['[sample]\nname = "Invented Slurm test sample"\nseed = 11\ndraws = 400\ncalibrate = 0\n']
    for i, n in enumerate(sizes, start=1):
        name = f"mock-{i}"
        fulcrum(args, ["synth", "--out", os.path.join(data, name), "--name", name, "--seed", str(20 + i),
                       "--grid-nx", str(n), "--grid-ny", str(n), "--grid-pixel-arcsec", str(40.0 / n),
                       "--optical-enabled=false", "--tail-pa-deg", str(70 * i)])
        lines.append(f'\n[[galaxy]]\nname = "{name}"\nvelocity = "{name}/vel.fits"\nintensity = "{name}/mom0.fits"\n'
                     f'intensity_error = "{name}/mom0_err.fits"\ntail_pa_deg = {70 * i}\n')
    manifest = os.path.join(data, "sample.toml")
    with open(manifest, "w") as f:
        f.write("".join(lines))
    return manifest


def product_files(top, skip=("shards", "slurm")):
    files = []
    for d, dirs, names in os.walk(top):
        if d == top:
            dirs[:] = [x for x in dirs if x not in skip]
        files += [os.path.relpath(os.path.join(d, n), top) for n in names]
    return sorted(files)


def compare_trees(whole, merged):
    a, b = product_files(whole), product_files(merged)
    if a != b:
        raise AssertionError(f"different files: only unsharded {sorted(set(a) - set(b))}, "
                             f"only merged {sorted(set(b) - set(a))}")
    for f in a:
        with open(os.path.join(whole, f), "rb") as x, open(os.path.join(merged, f), "rb") as y:
            if x.read() != y.read():
                raise AssertionError("differs from the unsharded run: " + f)
    print(f"merged sample equals the unsharded run byte for byte ({len(a)} files)")


def submit(cluster, script, *shards):
    r = cluster.run(["bash", script] + [str(s) for s in shards], extra_env={"SOURCE_DATE_EPOCH": EPOCH})
    if r.returncode != 0:
        raise AssertionError("bash " + script + " failed:\n" + r.stdout + r.stderr)
    words = r.stdout.split()
    array_job, merge_job = words[words.index("shards:") + 2], words[words.index("merge:") + 2]
    print(r.stdout.strip())
    return array_job, merge_job


def wait_final(cluster, job, what):
    return wait_for(what + " (job " + job + ") to end",
                    lambda: (lambda s: s if s in FINAL_STATES else None)(cluster.job_state(job)))


def shard_process(cluster, array_job, task, exe):
    """PID of the fulcrum process of array task `task` of `array_job` on this
    test's cluster (its SLURM_CONF: another test cluster may have the same
    job ids)."""
    want = {f"SLURM_ARRAY_JOB_ID={array_job}".encode(), f"SLURM_ARRAY_TASK_ID={task}".encode(),
            f"SLURM_CONF={cluster.conf}".encode()}
    for pid in filter(str.isdigit, os.listdir("/proc")):
        try:
            if os.path.realpath(f"/proc/{pid}/exe") != os.path.realpath(exe):
                continue
            with open(f"/proc/{pid}/environ", "rb") as f:
                if want <= set(f.read().split(b"\0")):
                    return int(pid)
        except OSError:
            continue
    return None


def staged_galaxy(out, shard, galaxy):
    """The galaxy's report.json in the shard's staging folder (beside the
    shard's folder, io/staged_folder.hpp), or None while there is none."""
    found = glob.glob(os.path.join(out, "shards", ".%d.fulcrum-staging-*" % shard, galaxy, "report.json"))
    return found[0] if found else None


def kill_shard_mid_run(cluster, array_job, out, exe):
    pid = wait_for("shard 1 to write its first galaxy into its staging folder",
                   lambda: shard_process(cluster, array_job, 1, exe) if staged_galaxy(out, 1, "mock-1") else None,
                   step=0.005)
    staging = os.path.dirname(os.path.dirname(staged_galaxy(out, 1, "mock-1")))
    os.kill(pid, signal.SIGKILL)
    print(f"shard 1 (pid {pid}) killed with SIGKILL; its staging folder holds {sorted(os.listdir(staging))}")
    state = wait_final(cluster, array_job + "_1", "killed shard 1")
    if state != "FAILED":
        raise AssertionError("shard 1 should have failed after SIGKILL, is " + state)


def case_requeue(args, cluster, manifest, out, script, whole):
    array_job, merge_job = submit(cluster, script)
    kill_shard_mid_run(cluster, array_job, out, args.fulcrum)
    wait_final(cluster, array_job + "_2", "shard 2")
    wait_for("the merge to wait for ever", lambda: cluster.job_reason(merge_job) == "DependencyNeverSatisfied")
    env = dict(os.environ, SOURCE_DATE_EPOCH=EPOCH)
    by_hand = subprocess.run([args.fulcrum, "--quiet", "merge", os.path.join(out, "shards", "1"),
                              os.path.join(out, "shards", "2"), "--out", os.path.join(cluster.root, "by-hand")],
                             env=env, capture_output=True, text=True)
    print("merge by hand: exit", by_hand.returncode, by_hand.stderr.strip())
    if by_hand.returncode != 2 or "shards/1" not in by_hand.stderr or len(by_hand.stderr.strip().splitlines()) != 1:
        raise AssertionError("merge of a sample with a killed shard should be a one-line refusal naming shard 1")
    array_again, merge_again = submit(cluster, script, 1)
    state = wait_final(cluster, merge_again, "the second merge")
    if state != "COMPLETED":
        raise AssertionError("the second merge ended " + state + ":\n" + tail(os.path.join(out, "slurm", "merge.log")))
    if cluster.job_state(merge_job) != "CANCELLED":
        raise AssertionError("the first merge should have been cancelled by the resubmission")
    compare_trees(whole, out)


def case_slurm_requeue(args, cluster, manifest, out, script, whole):
    array_job, merge_job = submit(cluster, script)
    task = array_job + "_1"
    wait_for("shard 1 to write its first galaxy into its staging folder",
             lambda: staged_galaxy(out, 1, "mock-1") and cluster.job_state(task) == "RUNNING", step=0.005)
    r = cluster.run(["scontrol", "requeue", task])
    if r.returncode != 0:
        raise AssertionError("scontrol requeue failed: " + r.stderr)
    print("shard 1 requeued by Slurm while it ran")
    # Slurm holds a requeued job for about two minutes; let it start now.
    wait_for("the requeued shard to be pending", lambda: cluster.job_state(task) == "PENDING")
    wait_for("the requeued shard to accept a start time", lambda: cluster.run(
        ["scontrol", "update", "JobId=" + task, "StartTime=now"]).returncode == 0)
    state = wait_final(cluster, merge_job, "the merge")
    if state != "COMPLETED":
        raise AssertionError("the merge ended " + state + ":\n" + tail(os.path.join(out, "slurm", "merge.log")))
    restarts = [w for w in cluster.run(["scontrol", "show", "job", task]).stdout.split() if w.startswith("Restarts=")]
    print("shard 1:", restarts)
    if restarts != ["Restarts=1"]:
        raise AssertionError("shard 1 should have run twice")
    compare_trees(whole, out)


def case_array(args, cluster, manifest, out, script, whole):
    array_job, merge_job = submit(cluster, script)
    state = wait_final(cluster, merge_job, "the merge")
    if state != "COMPLETED":
        raise AssertionError("the merge ended " + state + ":\n" + tail(os.path.join(out, "slurm", "merge.log")) +
                             tail(os.path.join(out, "slurm", "shard-1.log")))
    for i in (1, 2):
        if cluster.job_state(f"{array_job}_{i}") != "COMPLETED":
            raise AssertionError(f"shard {i} did not complete")
        if not os.path.exists(os.path.join(out, "shards", str(i), "shard.json")):
            raise AssertionError(f"shard {i} left no shard.json")
        if glob.glob(os.path.join(out, "shards", ".%d.fulcrum-staging-*" % i)):
            raise AssertionError(f"shard {i} left its staging folder")
    compare_trees(whole, out)


CASES = {"array": case_array, "requeue": case_requeue, "slurm-requeue": case_slurm_requeue}


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--fulcrum", required=True)
    ap.add_argument("--case", choices=list(CASES), required=True)
    args = ap.parse_args()
    args.fulcrum = os.path.abspath(args.fulcrum)
    # Killed from outside (CTest's timeout, Ctrl-C): still stop the cluster.
    signal.signal(signal.SIGTERM, lambda *_: sys.exit(1))
    root = tempfile.mkdtemp(prefix="fulcrum-slurm-")
    cluster = Cluster(root)
    try:
        cluster.start()
        print("one-node Slurm cluster up in", root)
        manifest = make_sample(args, root)
        whole = os.path.join(root, "whole")
        fulcrum(args, ["run", manifest, "--out", whole])
        out = os.path.join(root, "on-slurm")
        script = os.path.join(root, "submit.sh")
        r = fulcrum(args, ["run", manifest, "--out", out, "--slurm-script", script, "--shards", "2"])
        print(r.stdout.strip())
        CASES[args.case](args, cluster, manifest, out, script, whole)
    except Skip as e:
        print("SKIPPED: the test Slurm cluster cannot run here: " + str(e))
        cluster.stop()
        import shutil
        shutil.rmtree(root, ignore_errors=True)
        return SKIP
    except AssertionError as e:
        print("FAILED: " + str(e) + "\n(files kept in " + root + ")")
        for log in ("slurmctld.log", "slurmd.log"):
            print("--- " + log + " (end)\n" + tail(os.path.join(root, log)))
        return 1
    finally:
        cluster.stop()
    print("PASSED")
    import shutil
    shutil.rmtree(root, ignore_errors=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
