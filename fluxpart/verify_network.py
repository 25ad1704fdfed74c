"""``fluxpart verify`` of a batch output folder: the network's seal, then every site.

A batch output folder (:mod:`fluxpart.batch`) holds one result folder per site and
the network tables, sealed by ``network.json``. Verifying it checks that seal as
:func:`fluxpart.network_tables.read_network` does (every network file's SHA-256, every site
folder's manifest seal) and then verifies each site folder the seal lists, in the
order of their keys (sorted, as the seal lists them), serially, by
:func:`fluxpart.verify.verify` unchanged. A site the
batch failed (a row of ``failures.parquet``) has no result of that batch to verify:
it is reported as not computed by the batch and does not fail the network's verdict
by itself (the batch's own exit status and its failures table already say it failed).
A complete seal that does not hold (a network file or a site's manifest not as sealed)
fails the verdict, as a tampered result folder fails its own, and the sites are still
verified; a seal damaged or left incomplete lists no site to walk and is an error.
A site that cannot be verified (its folder missing, its input at no recorded place, a
folder it cannot read) does not stop the walk: every other site is still verified and
reported, and the command ends in one ``error:`` line naming each such site (exit 2, round
faults46).
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

from .errors import ConfigError, FluxpartError
from .manifest import manifest_text, shown_path
from .network_layout import NETWORK_DATASETS, NETWORK_SEAL
from .network_tables import SealMismatch, failed_sites, network_table
from .verify import JSON_FORMAT, VERIFY_CAUTION, verify
from .verify_folder import resolved_folder

__all__ = ["NetworkReport", "is_network_folder", "verify_network"]

#: The layout of ``verify --json``'s object for a batch output folder.
NETWORK_JSON_FORMAT = "fluxpart-verify-network/1"
#: A failed site's verdict: the batch wrote no result for it.
NOT_COMPUTED = "not computed by the batch"
#: The verdict of a site whose verification ended in an error (named beside it).
NOT_VERIFIED = "could not be verified"


def is_network_folder(directory) -> bool:
    """True where `directory` is a batch output folder: a ``network.json``, no manifest."""
    directory = Path(directory)
    return (directory / NETWORK_SEAL).is_file() and not (directory / "manifest.json").exists()


@dataclass(frozen=True)
class NetworkReport:
    """The verdict on a batch output folder.

    Attributes
    ----------
    directory : pathlib.Path
        The batch output folder.
    sites : tuple of (str, VerifyReport)
        Each site the seal lists, sorted by key, with its single-folder report.
    failed : tuple of (str, str)
        Each site the batch failed (``failures.parquet``), sorted by key, with its
        recorded error.
    seal_problem : str
        Why the network files or a site's manifest do not match ``network.json`` (as
        :func:`fluxpart.network_tables.read_network` refuses them), or "" where they match.
    unverified : tuple of (str, str)
        Each listed site whose verification ended in an error, with the error (its
        remedy included): nothing was judged for it.
    """

    directory: Path
    sites: tuple
    failed: tuple
    seal_problem: str = ""
    unverified: tuple = ()

    @property
    def exit_code(self) -> int:
        """0 when the seal holds and every computed site is reproduced (as verify's
        rules allow), else 1; 1 also where no site was computed (every site failed):
        nothing was reproduced (lead52); 2 where a site could not be verified (an error
        to mend, as for one result folder)."""
        if self.unverified:
            return 2
        return max((int(bool(self.seal_problem)), int(not self.sites),
                    *(report.exit_code for _, report in self.sites)))

    @property
    def verdict(self) -> str:
        """``"reproduced"``, ``"not reproduced"`` (some site) or ``"nothing reproduced"``
        (no site computed); ``"not verified"`` where a site could not be verified."""
        if self.unverified:
            return "not verified"
        if not self.sites:
            return "nothing reproduced"
        return "reproduced" if self.exit_code == 0 else "not reproduced"

    def lines(self, quiet: bool = False) -> list[str]:
        """One line per site with its ``result:`` line below it (which seed, input, site
        config and release, as ``verify SITE`` names them), the differences of a site not
        reproduced (not with `quiet`), the network's verdict and the caution.

        A site's verdict alone left an auditor without the input bytes, seed and release
        of each site and, for a site not reproduced, without what differed (auditor53).
        """
        width = max((len(key) for key, _ in (*self.sites, *self.failed, *self.unverified)),
                    default=0)
        seal = (f"seal NOT intact: {self.seal_problem}" if self.seal_problem else
                f"seal intact ({NETWORK_SEAL}: every network file and site folder as the "
                "batch wrote them)")
        lines = [f"network {shown_path(self.directory)}: {seal}; sites verified one after "
                 "another"]
        for key, report in self.sites:
            changed = report.changes
            lines.append(f"  {key:<{width}}  {report.verdict}"
                         + (f" ({'; '.join(changed)})" if changed else ""))
            own = report.format().splitlines()
            if report.exit_code and not quiet:
                # the single folder's difference lines, between its verdict and result:
                shown = [line for line in own[1:] if line.startswith("  ")]
                lines += [f"    {line.strip()}" for line in shown]
                lines.append(f"    (fluxpart verify {shown_path(report.directory)} gives "
                             "this site's whole report)")
            lines += [f"    {line}" for line in own if line.startswith("result: ")]
            lines += [f"    note: {note}" for note in report.kept_notes]
        for key, error in self.unverified:
            lines.append(f"  {key:<{width}}  {NOT_VERIFIED}: {error}")
        for key, error in self.failed:
            lines.append(f"  {key:<{width}}  {NOT_COMPUTED} ({error.split(':', 1)[0]}; "
                         "in failures.parquet)")
        bad = [key for key, report in self.sites if report.exit_code]
        if self.unverified:
            lines.append("not verified: "
                         + ("the network seal does not hold; " if self.seal_problem else "")
                         + f"{len(self.unverified)} of "
                         f"{len(self.sites) + len(self.unverified)} listed site(s) "
                         f"{NOT_VERIFIED} ({', '.join(k for k, _ in self.unverified)}); "
                         f"{len(self.sites) - len(bad)} reproduced, {len(bad)} not")
            lines.append(f"Caution: {VERIFY_CAUTION}")
            return lines
        lines.append(
            f"{self.verdict}: " + ("the network seal does not hold; " if self.seal_problem
                                   else "") + (f"{len(bad)} of {len(self.sites)} site(s) not reproduced: "
                                   + ", ".join(bad) if bad else
                                   f"all {len(self.sites)} computed site(s) reproduced"
                                   if self.sites else "the batch computed no site")
            + (f"; {len(self.failed)} site(s) {NOT_COMPUTED}, which does not by itself fail "
               "this verdict (the batch reported them failed)" if self.failed else ""))
        lines.append(f"Caution: {VERIFY_CAUTION}")
        return lines

    def as_json(self) -> str:
        """One JSON object: ``sites`` (each site's :meth:`VerifyReport.as_json` object with
        its ``site`` key; for a site that could not be verified ``verdict``
        :data:`NOT_VERIFIED`, its ``error`` and ``exit_code`` 2; for a failed site
        ``verdict`` :data:`NOT_COMPUTED` and its ``error``), ``verdict``, ``exit_code``,
        ``caution``; keys sorted, ASCII."""
        sites = [{"site": key, **json.loads(report.as_json())} for key, report in self.sites]
        sites += [{"site": key, "verdict": NOT_VERIFIED, "error": error, "exit_code": 2}
                  for key, error in self.unverified]
        sites += [{"site": key, "verdict": NOT_COMPUTED, "error": error, "exit_code": 0}
                  for key, error in self.failed]
        return json.dumps({"format": NETWORK_JSON_FORMAT, "site_format": JSON_FORMAT,
                           "directory": str(self.directory), "sites": sites,
                           "verdict": self.verdict, "exit_code": self.exit_code,
                           "seal_problem": self.seal_problem,
                           "caution": VERIFY_CAUTION},
                          indent=2, sort_keys=True, ensure_ascii=True, allow_nan=False)


def _listed_sites(out: Path) -> list[tuple[str, Path]] | None:
    """The site keys and folders ``network.json`` lists, sorted by key (the order the
    batch writes them in, whatever order an edited seal holds them in): None where it is
    unreadable or no complete seal; an empty list where a complete seal lists no site (a
    batch that computed none)."""
    path = out / NETWORK_SEAL
    try:
        seal = json.loads(manifest_text(path.read_bytes()))
    except (OSError, ValueError, RecursionError):
        seal = None      # named by the seal check that follows
    sites = seal.get("sites") if isinstance(seal, dict) else None
    if not isinstance(sites, dict) or seal.get("complete") is not True:
        return None
    return sorted((str(key), out / str(site.get("folder", key) if isinstance(site, dict)
                                       else key))
                  for key, site in sites.items())


def verify_network(directory, *, exact: bool = False) -> NetworkReport:
    """Verify a batch output folder: its seal, then each site folder it lists.

    Parameters
    ----------
    directory : path-like
        Folder written by ``fluxpart batch`` (its ``out``).
    exact : bool, optional
        Demand bit identity of every site (as ``verify --exact``).

    Returns
    -------
    NetworkReport
        Each listed site's :class:`~fluxpart.verify.VerifyReport`, serially computed,
        and the sites the batch failed. A site folder the seal lists that is missing, or
        a site's verify error (its input not found, say), is the report's `unverified`
        entry for that site, and the walk goes on with the next.

    Raises
    ------
    InputFileError
        If the seal is no complete one (damaged, or written incomplete by a stopped
        batch). Network files or site manifests that do not match a complete seal are
        the report's `seal_problem`.

    References
    ----------
    Common practice of reproducible computation: a result is checked by recomputing
    it from its recorded input and settings, here one site at a time.
    """
    out = resolved_folder(directory)      # named as on disk (round leftovers61)
    sealed = _listed_sites(out)
    listed = sealed or []
    # a site folder gone is named with the sites that could not be verified, and the walk
    # verifies the others (review75: it ended the command before any site, the fault
    # faults46 mended for a site's input)
    gone = {key: (f"its folder {str(folder)!r}, listed in {str(out / NETWORK_SEAL)!r}, does "
                  "not exist (moved or deleted?); put it back, or run the batch again")
            for key, folder in listed if not folder.is_dir()}
    seal_problem = ""
    for table in NETWORK_DATASETS:
        try:
            network_table(out, table)      # the seal check of read_network, unchanged
        except FluxpartError as error:
            if sealed is None:      # no seal, or one cut short or incomplete: nothing to walk
                error.args = (f"verify: {error}",)
                raise
            # a file or site manifest not as sealed is a failed verification (exit 1), as a
            # tampered result folder is, and its sites are still verified; read_network's
            # remedy (run the batch again) would overwrite what an auditor must see
            seal_problem = error.problem if isinstance(error, SealMismatch) else str(error)
            break
    reports, unverified = [], []
    for key, folder in listed:
        if key in gone:
            unverified.append((key, gone[key]))
            continue
        try:
            reports.append((key, verify(folder, exact=exact)))
        except FluxpartError as error:
            # the single folder's remedy, "give ... with --input", is refused for a batch
            # output folder: say where the option goes (auditor53)
            option = next((name for name in ("--input", "--config") if name in str(error)),
                          None)
            where = (f" (a batch output folder takes no {option}: give it with the site's "
                     f"own folder, fluxpart verify {shown_path(folder)} {option} FILE)"
                     if option else "")
            # the walk goes on: stopping here left every later site unverified, and an
            # auditor who mended one site's input met the next at each rerun (faults46)
            unverified.append((key, f"{str(error).removeprefix('verify: ')}{where}"))
    try:
        recorded_failures = failed_sites(out)
    except FluxpartError:
        if not seal_problem:
            raise
        # a failures table not as sealed that is no fluxpart table either (rewritten by
        # another tool): the seal problem names it; its rows are no record of the batch
        recorded_failures = {}
    # sorted by key as the sites are: failures.parquet holds them in the batch's order
    failed = tuple(sorted((key, error) for key, error in recorded_failures.items()
                          if key not in dict(listed)))
    return NetworkReport(directory=out, sites=tuple(reports), failed=failed,
                         seal_problem=seal_problem, unverified=tuple(unverified))


def command_verify_network(args) -> int:
    """``fluxpart verify OUT`` of a batch output folder; same options and exit statuses
    (0 every computed site reproduced, 1 any not, 2 error)."""
    given = [name for name in ("input", "config") if getattr(args, name, None)]
    if given:
        raise ConfigError(f"verify --{given[0]}: {str(args.directory)!r} is a batch output "
                          "folder, whose sites each have their own input and config; give "
                          "one site's folder in it with --" + given[0])
    report = verify_network(args.directory, exact=bool(getattr(args, "exact", False)))
    print(report.as_json() if getattr(args, "json", False) else
          "\n".join(report.lines(quiet=bool(getattr(args, "quiet", False)))))
    if report.unverified:
        # the report above holds every site judged; the error line names what to mend
        raise FluxpartError(f"verify: {len(report.unverified)} site(s) of "
                            f"{str(report.directory)!r} could not be verified: "
                            + "; ".join(f"site {key!r}: {error}"
                                        for key, error in report.unverified))
    return report.exit_code

