"""Robustness of the command line against user mistakes (fresh-eyes campaign).

Contract (README "Command line"): a user error is one ``error:`` line naming the
setting, and exit status 2, with nothing written.
"""

from bundles import RUN_WRITING_ONE_TABLE

from fluxpart.cli import main


def _result_folder(path):
    """A folder that looks like a result folder to the CLI's output checks."""
    path.mkdir()
    (path / "manifest.json").write_text("{}")
    return path


def test_report_out_inside_result_folder_refused(tmp_path, capsys):
    """report --out DIR/figs would add an unlisted folder, so load/verify/diff would refuse DIR."""
    result = _result_folder(tmp_path / "out")
    status = main(["report", str(result), "--out", str(result / "figs"), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1 and err[0].startswith("error: --out")
    assert not (result / "figs").exists()


def test_report_out_into_another_result_folder_refused(tmp_path, capsys):
    result = _result_folder(tmp_path / "a")
    other = _result_folder(tmp_path / "b")
    assert main(["report", str(result), "--out", str(other), "--quiet"]) == 2
    assert "inside the result folder" in capsys.readouterr().err


def test_run_out_inside_result_folder_refused(tmp_path, capsys):
    """run --out DIR/sub is refused before any reading or computation."""
    result = _result_folder(tmp_path / "out")
    config = tmp_path / "site.toml"
    config.write_text("[processing]\nseed = 0\n")
    status = main(["run", str(config), "--out", str(result / "sub"), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1 and err[0].startswith("error: --out")
    assert sorted(p.name for p in result.iterdir()) == ["manifest.json"]


def test_ctrl_c_is_one_line_not_a_traceback(tmp_path, capsys, monkeypatch):
    """Ctrl-C (KeyboardInterrupt) exits 130 (128 + SIGINT, the shell convention) with one line."""
    import fluxpart.cli as cli

    def interrupted(args):
        raise KeyboardInterrupt

    monkeypatch.setattr(cli, "_command_run", interrupted)
    status = main(["run", str(tmp_path / "site.toml"), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 130
    assert len(err) == 1 and err[0].startswith("error: interrupted")


def test_export_into_result_folder_refused(tmp_path, capsys):
    """export --netcdf DIR/site.nc would add an unlisted file, so load/verify/diff refuse DIR."""
    result = _result_folder(tmp_path / "out")
    status = main(["export", str(result), "--netcdf", str(result / "site.nc")])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1 and err[0].startswith("error: --netcdf")
    assert not (result / "site.nc").exists()


def test_demo_negative_seed_names_the_option(tmp_path, capsys):
    """demo --seed -1 names the option, not an inner 'seed = -1', and writes nothing."""
    assert main(["demo", "--seed", "-1", "--out", str(tmp_path / "d"), "--quiet"]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and err[0].startswith("error: --seed -1: expected a whole number >= 0")
    assert not (tmp_path / "d").exists()


def test_report_and_export_into_an_unwritable_place_are_one_line(written_demo, tmp_path,
                                                                capsys):
    """An output below a file (or on a read-only medium, a folder without permission) is one
    `error:` line naming the place, exit 2; before, the OSError of mkdir or mkstemp left
    a traceback (exit 1)."""
    _, folder = written_demo
    blocker = tmp_path / "notes.txt"
    blocker.write_text("a file where a folder was expected\n")
    status = main(["report", str(folder), "--out", str(blocker / "report"), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1
    assert err[0].startswith("error: the report folder") and "notes.txt" in err[0]
    status = main(["export", str(folder), "--netcdf", str(blocker / "site.nc")])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2 and len(err) == 1
    assert err[0].startswith("error: --netcdf") and "notes.txt" in err[0]
    assert blocker.read_text() == "a file where a folder was expected\n"


def test_sigterm_while_staging_is_one_line_and_leaves_no_staging(tmp_path):
    """SIGTERM (`kill PID`, a scheduler's time limit) arriving while a result is staged:
    exit 143 (128 + SIGTERM, the shell convention) with one `error:` line, and the staging
    folder removed as on Ctrl-C; before, the process died outright and left
    `.out.staging-*` beside the folder. Runs in a child process: without the handler
    the signal ends the process that receives it."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    script = (
        "import os, signal, time, sys\n"
        "import pandas as pd\n"
        "import fluxpart.cli as cli, fluxpart.resultdir as resultdir\n"
        "def killed(staging, directory):\n"
        "    os.kill(os.getpid(), signal.SIGTERM)\n"
        "    time.sleep(5)\n"
        "resultdir._swap_in = killed\n"
        + RUN_WRITING_ONE_TABLE)
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    out = tmp_path / "out"
    done = subprocess.run([sys.executable, "-c", script, str(out)], env=env, cwd=tmp_path,
                          capture_output=True, text=True, timeout=120)
    err = done.stderr.strip().splitlines()
    assert done.returncode == 143, done.stderr
    assert len(err) == 1 and err[0].startswith("error: terminated (SIGTERM)")
    assert not out.exists()
    assert not any(".staging" in path.name for path in tmp_path.iterdir())


_STAGED_RUN = (
    "import os, signal, time, sys\n"
    "import pandas as pd\n"
    "import fluxpart.cli as cli, fluxpart.resultdir as resultdir\n"
    "if sys.argv[2] == 'ignored':\n"
    "    signal.signal(signal.SIGHUP, signal.SIG_IGN)\n"
    "real_swap = resultdir._swap_in\n"
    "def hung_up(staging, directory):\n"
    "    os.kill(os.getpid(), signal.SIGHUP)\n"
    "    time.sleep(0.5)\n"
    "    real_swap(staging, directory)\n"
    "resultdir._swap_in = hung_up\n"
    + RUN_WRITING_ONE_TABLE)


def test_sighup_while_staging_unwinds_like_sigterm_unless_ignored(tmp_path):
    """The terminal or SSH session closing sends SIGHUP, whose default action (POSIX
    signal(7): terminate) ended a run or report outright, like kill -9: the staging folder
    stayed, and a report's lies inside the result folder. Now it unwinds as SIGTERM does:
    exit 129 (128 + SIGHUP, the shell convention), one `error:` line, no staging left. A
    SIGHUP ignored on purpose (`nohup`, which sets SIG_IGN) stays ignored: the run ends
    normally with its result written."""
    import os
    import signal
    import subprocess
    import sys
    from pathlib import Path

    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    out = tmp_path / "out"
    done = subprocess.run([sys.executable, "-c", _STAGED_RUN, str(out), "default"], env=env,
                          cwd=tmp_path, capture_output=True, text=True, timeout=120)
    err = done.stderr.strip().splitlines()
    assert done.returncode == 128 + signal.SIGHUP, done.stderr
    assert len(err) == 1 and err[0].startswith("error: hung up (SIGHUP")
    assert not out.exists()
    assert not any(".staging" in path.name for path in tmp_path.iterdir())
    done = subprocess.run([sys.executable, "-c", _STAGED_RUN, str(out), "ignored"], env=env,
                          cwd=tmp_path, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert (out / "manifest.json").is_file()
    assert not any(".staging" in path.name for path in tmp_path.iterdir())


def test_usage_mistakes_are_one_error_line(capsys):
    """A missing argument, an unknown command or option, a bad option value: one `error:`
    line naming the command and the mistake, exit 2 (before: argparse's usage block and a
    'fluxpart run: error: ...' line)."""
    import pytest

    for argv, said in ((["run"], "fluxpart run: the following arguments are required: config"),
                       (["frobnicate"], "invalid choice: 'frobnicate'"),
                       (["demo", "--seed", "x"], "fluxpart demo: argument --seed"),
                       (["verify", "out", "--fast"], "unrecognized arguments: --fast")):
        with pytest.raises(SystemExit) as stop:
            main(argv)
        err = capsys.readouterr().err.strip().splitlines()
        assert stop.value.code == 2
        assert len(err) == 1 and err[0].startswith("error: ") and said in err[0], err


def test_a_stray_output_folder_is_named_with_its_command_and_option(capsys):
    """`fluxpart run site.toml out` (the folder without --out): argparse named the leftover
    from the top-level parser, "fluxpart: unrecognized arguments" and "see fluxpart
    --help"; now the command's own help and the option that takes the folder (review,
    round five)."""
    import pytest

    for argv, said in ((["run", "site.toml", "out"],
                        "error: fluxpart run: unrecognized arguments: out; to write to 'out', "
                        "give it as --out out (see fluxpart run --help)"),
                       (["verify", "out", "--fast"],
                        "error: fluxpart verify: unrecognized arguments: --fast (see fluxpart "
                        "verify --help)")):
        with pytest.raises(SystemExit) as stop:
            main(argv)
        assert stop.value.code == 2
        assert capsys.readouterr().err.strip().splitlines() == [said]


def test_status_survives_a_reader_that_closes_early(tmp_path):
    """`fluxpart check SITE | head -1`: the reader closes the pipe, the next write fails
    (EPIPE, POSIX write(2)). The command still exits with its own status (1: a problem
    listed) and prints no traceback; before, it stopped at that write with status 0.
    The pipe is closed before the command writes anything, so the test does not race."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    from fluxpart.demo import write_example

    config = write_example(tmp_path)
    config.write_text(config.read_text().replace("latitude = 49.3", "latitude = -49.3"))
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    child = subprocess.Popen([sys.executable, "-m", "fluxpart", "check", str(config)],
                             env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    child.stdout.close()
    err = child.stderr.read().decode()
    assert child.wait(timeout=300) == 1, err
    assert "Traceback" not in err and "Exception ignored" not in err


def test_run_into_the_result_folder_of_another_site_is_refused_before_reading(tmp_path,
                                                                              capsys):
    """The same --out for two sites: one error line naming both sites, the folder untouched.

    The second site's result replaced the first one's before.
    """
    from bundles import make_bundle

    config = make_bundle(tmp_path, records=48)
    result = tmp_path / "out"
    result.mkdir()
    (result / "manifest.json").write_text('{"site": {"name": "Another tower"}}')
    (tmp_path / "tower.csv").unlink()          # refused before the input is read
    status = main(["run", str(config), "--out", str(result), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1 and err[0].startswith("error: --out")
    assert "'Another tower'" in err[0] and "[site] name" in err[0]
    assert sorted(p.name for p in result.iterdir()) == ["manifest.json"]


def test_empty_path_arguments_are_usage_mistakes(tmp_path, capsys, monkeypatch):
    """``--out "$OUT"`` with OUT unset: ``Path("")`` is the current folder, so demo wrote its
    result folder over the working directory (then a FileNotFoundError traceback), report
    wrote its page into it and run fell back to its default folder without a word."""
    import pytest

    monkeypatch.chdir(tmp_path)
    for argv in (["demo", "--out", ""], ["run", "site.toml", "--out", ""],
                 ["report", "out", "--out", " "], ["verify", ""], ["check", ""],
                 ["export", "out", "--netcdf", ""]):
        with pytest.raises(SystemExit) as stop:
            main(argv)
        err = capsys.readouterr().err.strip().splitlines()
        assert stop.value.code == 2, argv
        assert len(err) == 1 and err[0].startswith("error: ") and "empty path" in err[0], err
    assert list(tmp_path.iterdir()) == []


def test_out_that_is_the_current_folder_is_refused_before_computing(tmp_path, capsys,
                                                                    monkeypatch):
    """A result folder is replaced whole: ``--out .`` (or a parent of the working folder)
    left the shell in a deleted folder, and demo's report step failed with a traceback."""
    inside = tmp_path / "results" / "here"
    inside.mkdir(parents=True)
    monkeypatch.chdir(inside)
    for out in (".", str(tmp_path / "results")):
        status = main(["demo", "--out", out, "--quiet"])
        err = capsys.readouterr().err.strip().splitlines()
        assert status == 2
        assert len(err) == 1 and err[0].startswith("error: --out")
        assert "current folder" in err[0]
    assert list(inside.iterdir()) == []
    assert [p.name for p in (tmp_path / "results").iterdir()] == ["here"]


def test_run_with_a_missing_input_file_is_one_error_line(tmp_path, capsys):
    """The input's SHA-256 is taken before the read; a config naming an absent file (a
    60-minute example's CSV renamed, a typo) must give the reader's one `error:` line naming
    `[input] path`, as `check` does, not an OSError traceback (contract: README "Command
    line", a user error is one line and exit 2)."""
    from fluxpart import demo

    config = demo.write_example(tmp_path / "site")
    config.with_suffix(".csv").rename(tmp_path / "site" / "renamed.csv")
    status = main(["run", str(config), "--out", str(tmp_path / "out"), "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert status == 2
    assert len(err) == 1 and err[0].startswith("error: [input] path") and "does not exist" in err[0]
    assert not (tmp_path / "out").exists()


def test_a_name_longer_than_the_system_allows_is_one_error_line(tmp_path, capsys):
    """A path with one name of 300 bytes, beyond NAME_MAX (255 bytes on Linux ext4, XFS,
    tmpfs and on macOS APFS; common practice), made pathlib's exists()/is_file() raise
    OSError ENAMETOOLONG inside the output and folder checks of run, report, export,
    verify and diff: a traceback (review round thirteen). Contract (README "Command
    line"): one `error:` line naming the path, exit 2, nothing written."""
    long = tmp_path / ("a" * 300)
    config = tmp_path / "site.toml"
    config.write_text("[site]\n")
    folder = _result_folder(tmp_path / "out")
    for argv in (["run", str(config), "--out", str(long), "--quiet"],
                 ["report", str(folder), "--out", str(long), "--quiet"],
                 ["export", str(folder), "--netcdf", f"{long}.nc"],
                 ["verify", str(long), "--quiet"],
                 ["diff", str(long), str(folder)],
                 ["report", str(long), "--quiet"]):
        status = main(argv)
        err = capsys.readouterr().err.strip().splitlines()
        assert status == 2, argv
        assert len(err) == 1 and err[0].startswith("error: the path '"), (argv, err)
        assert "longer than this system allows" in err[0] and "aaaa" in err[0], (argv, err)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out", "site.toml"]


def test_a_deleted_current_folder_is_one_error_line(tmp_path):
    """A shell left in a folder that was deleted (a result folder replaced whole by another
    run while a terminal was in it): getcwd(3) fails with ENOENT, and every command given
    a relative path, `run` and `demo` even with absolute ones, ended in a traceback. Now one
    `error:` line, exit 2; `verify` of an absolute path works on."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    script = ("import os, sys\n"
              "import fluxpart.cli as cli\n"
              "os.chdir(sys.argv[1]); os.rmdir(sys.argv[1])\n"
              "sys.exit(cli.main(sys.argv[2:]))\n")
    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    config = tmp_path / "site.toml"
    config.write_text("[processing]\nseed = 0\n")
    for number, argv in enumerate((["verify", "out"], ["report", "out"],
                                   ["run", str(config), "--out", "out"],
                                   ["demo", "--out", "out"])):
        gone = tmp_path / f"gone{number}"
        gone.mkdir()
        done = subprocess.run([sys.executable, "-c", script, str(gone), *argv], env=env,
                              cwd=tmp_path, capture_output=True, text=True, timeout=120)
        err = done.stderr.strip().splitlines()
        assert done.returncode == 2, done.stderr
        assert len(err) == 1, err
        assert ("the current folder no longer exists" in err[0]
                or "is relative to the current folder, which no longer exists" in err[0]), err


def test_a_closed_standard_output_keeps_the_exit_status(tmp_path):
    """Started with standard output closed (`>&-`; POSIX sh: the descriptor is closed, and
    Python then sets sys.stdout to None), a command's first print raised AttributeError:
    a traceback and exit 1 after a successful `demo`, whatever the verdict of `verify`.
    The output goes nowhere; the exit status is the command's own. The command run is
    `run` of a short bundle (:func:`bundles.make_bundle`), which prints its summary as
    `demo` does (the stream is replaced in `main`, for every command), without a year's
    computation and a report page in the child process."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    from bundles import make_bundle

    env = dict(os.environ, PYTHONPATH=str(Path(__file__).resolve().parents[1]))
    config = make_bundle(tmp_path / "site")
    out = tmp_path / "run"
    command = (f'"{sys.executable}" -m fluxpart run "{config}" --out "{out}" --quiet >&- ; '
               'echo "$?" >&2')
    done = subprocess.run(["sh", "-c", command], env=env, cwd=tmp_path, capture_output=True,
                          text=True, timeout=600)
    assert done.stderr.strip().splitlines()[-1] == "0", done.stderr
    assert "Traceback" not in done.stderr and (out / "manifest.json").is_file()
