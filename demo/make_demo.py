"""Make the invented demo league: league.xlsx, new-week.csv and true-skills.csv.

Run from anywhere: ``python demo/make_demo.py [--out FOLDER]`` (default: this folder).
The same seed always gives the same cell values.

The Harbourside & District Pool League, its venues and its people are invented.
The story the files tell:

- Four divisions play a weekly league night for two seasons (Sept-April, 30
  nights each, no nights over Christmas): Premier and Division One race to 5,
  Division Two and the Valley race to 4.  The Valley plays on Wednesdays at its
  own hall; the others play on Thursdays.
- Premier is the strongest division, Division Two the weakest.  The Valley is a
  pool of its own, stronger on average than the prior assumes (so its level is
  mostly a guess), with one dominant player who wins about 9 games in 10.
- A mid-season Saturday "Open night" in each season mixes Premier, Division
  One and Division Two.  Valley players do not attend, except one Valley player
  who came to the first season's Open night and played two matches: the only
  games that tie the Valley to the rest, so its link is weak but not zero.
- A knockout Cup each season (Division "Cup", Saturdays) mixes Premier,
  Division One and Division Two too.
- Every fourth league night is a team night: Premier, Division One and
  Division Two each add one doubles frame (Event "Team night", Partner A and
  Partner B filled in) between two pairs of that night's players; a side wins
  a game with probability sigmoid of the mean of its two strengths minus the
  other side's.
- Two Division Two players left after the first season; two newcomers joined
  Division Two late in the second season without a starting rating (their
  first night was a team night, and they played its doubles frame together,
  never meeting each other in singles); a transfer player joined Division One
  mid-season with a starting rating in the Players sheet.
- Wrinkles that should raise warnings only: one result spells a name in lower
  case, one uses a player's other name (listed under "Also known as"), and one
  match was abandoned (Note "void - player taken ill").
- The final league night is kept out of league.xlsx, in new-week.csv (same
  columns as the Results sheet).  In it, the weaker newcomer beats the strongest
  Division Two player, and the other newcomer sits the week out: their rating
  still moves, because their doubles partner was re-rated.
- true-skills.csv holds the strengths the games were simulated from: every game
  is won with probability sigmoid(r_a - r_b), and rating = 1500 + 400 r / ln 10.
"""
from __future__ import annotations

import argparse
import csv
import datetime as dt
import math
import sys
import shutil
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np
from openpyxl import Workbook
from openpyxl.styles import Font

HERE = Path(__file__).resolve().parent
PACKAGE_DATA = HERE.parent / "secretary" / "data"
try:
    from secretary.workbook import schema
except ImportError:  # run from a checkout without installing the package
    sys.path.insert(0, str(HERE.parent))
    from secretary.workbook import schema

SEED = 20240912
LEAGUE_NAME = "Harbourside & District Pool League"
RESULTS_COLUMNS = tuple(c.header for c in schema.RESULTS.columns)
TRUE_SKILLS_COLUMNS = ("Player", "Division", "True strength (log-odds)", "True rating (points)")

PREMIER, ONE, TWO, VALLEY = "Premier", "Division One", "Division Two", "Valley"
OPEN_NIGHT, CUP = "Open night", "Cup"
LEAGUE_NIGHT = "League night"
TEAM_NIGHT = "Team night"
TEAM_NIGHTS = 4  # every fourth league night is a team night, with one doubles frame per Thursday division
DOUBLES_SEED = 16  # the doubles frames draw from a stream of their own
VOID_NOTE = f"{schema.VOID_PREFIX} - player taken ill"

# Division: (mean strength, spread within the division, race to), strengths in log-odds.
# The spreads are invented (not measured from any league): they give the demo a rating SD of
# about 150 points.
LEVELS = {
    PREMIER: (0.90, 0.55, 5),
    ONE: (0.15, 0.55, 5),
    TWO: (-0.70, 0.55, 4),
    VALLEY: (0.25, 0.45, 4),  # stronger than the prior assumes: only its link can tell
}
DOMINANT_LEAD = 2.3  # log-odds above the Valley's mean: about 9 games in 10 won
TRANSFER_STRENGTH = 0.55  # a strong player for Division One
OPEN_NIGHT_RACE, CUP_RACE = 4, 5
WEEKS = 30
ABSENT = 0.02  # chance a player misses a league night

# Invented names: ROSTER plays both seasons, LEFT the first only, NEWCOMERS join
# late in the second, TRANSFER mid-way through the second.
ROSTER = {
    PREMIER: [
        "Aled Penhaligon", "Bronwen Cotterill", "Callum Nettleship", "Dervla Quarrie",
        "Eamon Brackley", "Fenella Oakshott", "Gareth Elphick", "Hollis Dunmore",
        "Imogen Gorringe", "Jago Kettleborough", "Kezia Lumsden", "Lachlan Mallender",
        "Morwenna Ingleby", "Nico Fairweather", "Orla Hebblethwaite", "Piers Jessop",
    ],
    ONE: [
        "Rhian Tolhurst", "Robert Ashdown", "Saffron Wetherall", "Tobias Prendergast",
        "Una Kilbride", "Vaughan Treloar", "Wilf Catchpole", "Yasmin Threlfall",
        "Zachary Pengelly", "Ailsa Brannigan", "Bartley Hoskins", "Cerys Lavington",
        "Dorian Makepeace", "Esme Rowntree", "Fergal Stainsby", "Greer Whitlock",
    ],
    TWO: [
        "Hamish Pocklington", "Isla Vosper", "Jory Blamey", "Keturah Oldroyd",
        "Leon Marchbank", "Maisie Trebilcock", "Niall Gostelow", "Tamsin O'Dowd",
        "Oscar Penrice", "Petra Scantlebury", "Ravi Dunstall", "Selma Hartigan",
        "Teodor Bickerstaff", "Ulla Kirkbride",
    ],
    VALLEY: [
        "Bryn Tregoning", "Cadi Evanson", "Dafydd Rowcliffe", "Eira Moskell",
        "Gwilym Pardoe", "Heledd Brimble", "Idris Yeoland", "Lowri Fennimore",
        "Meical Dowsett", "Nerys Gadsby", "Osian Trewin", "Rhodri Pellow",
    ],
}
LEFT = {TWO: ["Vince Lamplugh", "Winona Sturgess"]}
NEWCOMERS = {TWO: ["Xander Polglase", "Yvette Marwood"]}
TRANSFER = "Kasimir Thwaite"  # joins Division One
TRANSFER_WEEK = 16  # 0-based league night of the second season
NEWCOMER_WEEK = 23  # the two Division Two newcomers' first night: they play each other
DOMINANT = "Bryn Tregoning"
VALLEY_GUEST = "Osian Trewin"  # the one Valley player at the first Open night
ALIAS = ("Robert Ashdown", "Bob Ashdown")
LOWER_CASE_NAME = "Tamsin O'Dowd"

SEASON_STARTS = (dt.date(2024, 9, 12), dt.date(2025, 9, 11))  # Thursdays
OPEN_NIGHT_WEEK = 14  # the Saturday after this league night
CUP_WEEKS = (5, 11, 19, 25)  # Saturdays after these nights: last 16, 8, 4, final


@dataclass(frozen=True)
class Row:
    """One result: a row of the Results sheet (or of new-week.csv)."""

    date: dt.date
    division: str
    player_a: str
    player_b: str
    games_a: int
    games_b: int
    event: str
    note: str = ""
    partner_a: str = ""  # a doubles frame: each side's second player
    partner_b: str = ""

    def cells(self) -> tuple:
        """The row's cells in the Results sheet's column order."""
        return tuple((getattr(self, c.key) or None) if c.key.startswith("partner") else getattr(self, c.key)
                     for c in schema.RESULTS.columns)


@dataclass
class League:
    """Everything the demo files hold, before writing."""

    strength: dict[str, float]
    home: dict[str, str]
    starting: dict[str, float] = field(default_factory=dict)
    results: list[Row] = field(default_factory=list)
    new_week: list[Row] = field(default_factory=list)
    fixtures: list[tuple] = field(default_factory=list)


def points(strength: float) -> float:
    """Display rating of a log-odds strength (centre 1500, scale 400)."""
    return 1500.0 + 400.0 * strength / math.log(10.0)


def league_nights(start: dt.date) -> list[dt.date]:
    """The season's Thursdays, skipping the two around Christmas and New Year."""
    nights, day = [], start
    while len(nights) < WEEKS:
        if not (day.month == 12 and day.day >= 24) and not (day.month == 1 and day.day <= 3):
            nights.append(day)
        day += dt.timedelta(days=7)
    return nights


def play_race(rng: np.random.Generator, r_a: float, r_b: float, race: int) -> tuple[int, int]:
    """Simulate a race game by game: it ends when one side reaches ``race`` games."""
    p = 1.0 / (1.0 + math.exp(r_b - r_a))
    a = b = 0
    while a < race and b < race:
        if rng.random() < p:
            a += 1
        else:
            b += 1
    return a, b


def round_robin(players: list[str], week: int) -> list[tuple[str, str]]:
    """Week ``week`` of a circle-method round robin (a player meets everyone in turn)."""
    seats = list(players) + ([None] if len(players) % 2 else [])
    n = len(seats)
    k = week % (n - 1)
    rest = seats[1:]
    order = [seats[0]] + rest[-k:] + rest[:-k] if k else seats
    pairs = [(order[i], order[n - 1 - i]) for i in range(n // 2)]
    # Alternate who is written first so that nobody is always "Player A".
    pairs = [(a, b) if (week + i) % 2 else (b, a) for i, (a, b) in enumerate(pairs)]
    return [(a, b) for a, b in pairs if a is not None and b is not None]


def newcomers_meet(pairs: list[tuple[str, str]], one: str, other: str) -> list[tuple[str, str]]:
    """Swap partners so that ``one`` and ``other`` play each other."""
    def partner(name):
        return next(b if a == name else a for a, b in pairs if name in (a, b))

    if partner(one) == other:
        return pairs
    left = (partner(one), partner(other))
    kept = [p for p in pairs if one not in p and other not in p]
    return [(one, other), left] + kept


def mixed_pairs(rng: np.random.Generator, players: list[str], home: dict[str, str],
                met: set[frozenset]) -> list[tuple[str, str]]:
    """One round of pairs between players of different divisions who have not met tonight."""
    pool = [players[i] for i in rng.permutation(len(players))]
    pairs = []
    while pool:
        a = pool.pop(0)
        for b in pool:
            if home[b] != home[a] and frozenset((a, b)) not in met:
                pool.remove(b)
                pairs.append((a, b))
                met.add(frozenset((a, b)))
                break
    return pairs


def make_players(rng: np.random.Generator) -> League:
    """True strengths and home divisions for everyone who ever plays."""
    strength, home = {}, {}
    for division, names in ROSTER.items():
        mean, spread, _ = LEVELS[division]
        everyone = names + LEFT.get(division, []) + NEWCOMERS.get(division, [])
        for name, r in zip(everyone, rng.normal(mean, spread, len(everyone))):
            strength[name], home[name] = float(r), division
    strength[DOMINANT] = LEVELS[VALLEY][0] + DOMINANT_LEAD
    strength[TRANSFER], home[TRANSFER] = TRANSFER_STRENGTH, ONE
    league = League(strength=strength, home=home)
    # The club he came from sent his level: close to the truth, rounded to tens.
    league.starting[TRANSFER] = round(points(TRANSFER_STRENGTH) + rng.normal(0, 40), -1)
    return league


def members(division: str, season: int, week: int) -> list[str]:
    """Who belongs to a division on a given league night."""
    names = list(ROSTER[division])
    names += LEFT.get(division, []) if season == 0 else NEWCOMERS.get(division, [])
    if season == 1 and week < NEWCOMER_WEEK:
        names = [n for n in names if n not in NEWCOMERS.get(division, [])]
    if division == ONE and season == 1 and week >= TRANSFER_WEEK:
        names.append(TRANSFER)
    return names


def match(rng, league: League, date, division, a, b, race, event, note="") -> Row:
    """A simulated race between ``a`` and ``b`` as a result row."""
    games_a, games_b = play_race(rng, league.strength[a], league.strength[b], race)
    return Row(date, division, a, b, games_a, games_b, event, note)


def league_night(rng, league: League, season: int, week: int, date: dt.date) -> list[Row]:
    """Every division's matches on one league night (the Valley's the evening before)."""
    rows = []
    for division in (PREMIER, ONE, TWO, VALLEY):
        day = date - dt.timedelta(days=1) if division == VALLEY else date
        names = members(division, season, week)
        away = {n for n in names if rng.random() < ABSENT}
        pairs = round_robin(names, week)
        if division == TWO and season == 1 and week == NEWCOMER_WEEK:
            # The newcomers' first night: they partner each other in the doubles frame instead.
            pairs = [p for p in newcomers_meet(pairs, *NEWCOMERS[TWO]) if set(p) != set(NEWCOMERS[TWO])]
        for a, b in pairs:
            if a not in away and b not in away:
                rows.append(match(rng, league, day, division, a, b, LEVELS[division][2], LEAGUE_NIGHT))
    return rows


def is_team_night(season: int, week: int) -> bool:
    return week % TEAM_NIGHTS == TEAM_NIGHTS - 1 or (season == 1 and week == NEWCOMER_WEEK)


def team_frames(rng, league: League, season: int, week: int, night: list[Row]) -> list[Row]:
    """A team night's doubles frames: one per Thursday division, between two pairs of its players tonight."""
    if not is_team_night(season, week):
        return []
    rows = []
    for division in (PREMIER, ONE, TWO):
        tonight = sorted({n for r in night if r.division == division for n in (r.player_a, r.player_b)})
        date = next(r.date for r in night if r.division == division)
        if division == TWO and season == 1 and week == NEWCOMER_WEEK:
            a, a2 = NEWCOMERS[TWO]
            b, b2 = (str(n) for n in rng.choice(tonight, 2, replace=False))
        else:
            a, a2, b, b2 = (str(n) for n in rng.choice(tonight, 4, replace=False))
        s = league.strength
        games_a, games_b = play_race(rng, (s[a] + s[a2]) / 2, (s[b] + s[b2]) / 2, LEVELS[division][2])
        rows.append(Row(date, division, a, b, games_a, games_b, TEAM_NIGHT, partner_a=a2, partner_b=b2))
    return rows


def open_night(rng, league: League, season: int, date: dt.date) -> list[Row]:
    """Five rounds between players of different divisions, races to 4."""
    guests = []
    for division in (PREMIER, ONE, TWO):
        names = members(division, season, OPEN_NIGHT_WEEK)
        guests += [names[i] for i in sorted(rng.choice(len(names), 8, replace=False))]
    rows, met = [], set()
    for round_no in range(5):
        # The Valley visitor of the first season stayed for two rounds only.
        tonight = guests + ([VALLEY_GUEST] if season == 0 and round_no < 2 else [])
        if season == 0 and round_no < 2:
            partner = next(guests[i] for i in rng.permutation(len(guests))
                           if frozenset((guests[i], VALLEY_GUEST)) not in met)
            met.add(frozenset((partner, VALLEY_GUEST)))
            rows.append(match(rng, league, date, OPEN_NIGHT, VALLEY_GUEST, partner, OPEN_NIGHT_RACE, OPEN_NIGHT))
            tonight = [g for g in tonight if g not in (partner, VALLEY_GUEST)]
        rows += [match(rng, league, date, OPEN_NIGHT, a, b, OPEN_NIGHT_RACE, OPEN_NIGHT)
                 for a, b in mixed_pairs(rng, tonight, league.home, met)]
    return rows


def cup_entrants(rng, season: int) -> list[str]:
    """Sixteen entrants from Premier, Division One and Division Two, in draw order."""
    entrants = []
    for division, count in ((PREMIER, 8), (ONE, 5), (TWO, 3)):
        names = members(division, season, 0)
        entrants += [names[i] for i in sorted(rng.choice(len(names), count, replace=False))]
    return [entrants[i] for i in rng.permutation(len(entrants))]


def cup_round(rng, league: League, entrants: list[str], date: dt.date) -> tuple[list[Row], list[str]]:
    """One knockout round: its results and who goes through."""
    rows, winners = [], []
    note = "final" if len(entrants) == 2 else ""
    for a, b in zip(entrants[::2], entrants[1::2]):
        row = match(rng, league, date, CUP, a, b, CUP_RACE, CUP, note)
        rows.append(row)
        winners.append(a if row.games_a > row.games_b else b)
    return rows, winners


def final_night(rng, league: League, date: dt.date, history: list[Row]) -> list[Row]:
    """The new week: an upset in Division Two, and a player sitting out who will still move."""
    division_two = members(TWO, 1, WEEKS - 1)
    underdog, absent = sorted(NEWCOMERS[TWO], key=league.strength.get)
    favourite = max(division_two, key=league.strength.get)
    # The other newcomer sits this week out: they have played only a handful of
    # matches, one of them a doubles frame as the underdog's partner, so the underdog's
    # re-rating moves them (down: the pair's result becomes more the underdog's doing).
    rest = [n for n in division_two if n not in (underdog, favourite, absent)]
    rest = [rest[i] for i in rng.permutation(len(rest))][: len(rest) // 2 * 2]
    race = LEVELS[TWO][2]
    while True:  # replay until the underdog wins: same seed, same upset
        upset = match(rng, league, date, TWO, underdog, favourite, race, LEAGUE_NIGHT)
        if upset.games_a == race and upset.games_b <= 1:
            break
    rows = [upset] + [match(rng, league, date, TWO, a, b, race, LEAGUE_NIGHT)
                      for a, b in zip(rest[::2], rest[1::2])]
    others = [r for r in league_night(rng, league, 1, WEEKS - 1, date) if r.division != TWO]
    return in_order(others + rows)


def in_order(rows: list[Row]) -> list[Row]:
    """Rows by date, divisions in the league's order within a date."""
    order = {d: i for i, d in enumerate((PREMIER, ONE, TWO, VALLEY, OPEN_NIGHT, CUP))}
    return sorted(rows, key=lambda r: (r.date, order[r.division]))


def add_wrinkles(rows: list[Row]) -> list[Row]:
    """One void match, one result under another name, one name in lower case."""
    rows = list(rows)
    second_season = [i for i, r in enumerate(rows) if r.date >= SEASON_STARTS[1]]

    def first(test, start=0):
        return next(i for i in second_season[start:] if test(rows[i]))

    i = first(lambda r: r.division == PREMIER and r.games_a + r.games_b >= 7, 40)
    r = rows[i]
    # Abandoned at 2-1 when a player was taken ill: kept, but not to be rated.
    rows[i] = Row(r.date, r.division, r.player_a, r.player_b, 2, 1, r.event, VOID_NOTE)
    name, alias = ALIAS
    i = first(lambda r: r.player_a == name, 200)
    rows[i] = replace(rows[i], player_a=alias)
    i = first(lambda r: LOWER_CASE_NAME in (r.player_a, r.player_b), 300)
    r = rows[i]
    rows[i] = replace(r, **{side: getattr(r, side).lower() for side in ("player_a", "player_b")
                            if getattr(r, side) == LOWER_CASE_NAME})
    return rows


def build_league(seed: int = SEED) -> League:
    """Simulate the whole league from the seed."""
    rng = np.random.default_rng(seed)
    doubles_rng = np.random.default_rng(seed + DOUBLES_SEED)
    league = make_players(rng)
    rows: list[Row] = []
    for season, start in enumerate(SEASON_STARTS):
        entrants = cup_entrants(rng, season)
        nights = league_nights(start)
        for week, date in enumerate(nights):
            saturday = date + dt.timedelta(days=2)
            if season == 1 and week == WEEKS - 1:
                league.new_week = final_night(rng, league, date, rows)
                continue
            night = league_night(rng, league, season, week, date)
            rows += night + team_frames(doubles_rng, league, season, week, night)
            if week == OPEN_NIGHT_WEEK:
                rows += open_night(rng, league, season, saturday)
            if week in CUP_WEEKS:
                cup_rows, entrants = cup_round(rng, league, entrants, saturday)
                rows += cup_rows
    league.results = add_wrinkles(in_order(rows))
    races = {PREMIER: 5}  # Premier's races are printed on the fixture list
    league.fixtures = [(r.date, r.player_a, r.player_b, races.get(r.division), races.get(r.division))
                       for r in league.new_week]
    return league


def _sheet(wb: Workbook, spec: schema.SheetSpec, rows) -> None:
    """One input sheet: bold headers, the schema's widths, dates shown day-first."""
    rows = [list(row) for row in rows]
    columns = spec.columns[: len(rows[0])]  # Settings: only Setting and Value
    ws = wb.create_sheet(spec.name)
    ws.append([c.header for c in columns])
    for cell in ws[1]:
        cell.font = Font(bold=True)
    for row in rows:
        ws.append(row)
    for i, column in enumerate(columns, start=1):
        letter = ws.cell(1, i).column_letter
        ws.column_dimensions[letter].width = column.width
        if column.key == "date":
            for (cell,) in ws.iter_rows(min_row=2, min_col=i, max_col=i):
                cell.number_format = "dd/mm/yyyy"
    ws.freeze_panes = "A2"


def write_workbook(league: League, path: Path) -> None:
    """Write league.xlsx: Results, Players, Settings and Fixtures."""
    wb = Workbook()
    wb.remove(wb.active)
    wb.properties.creator = LEAGUE_NAME
    wb.properties.created = dt.datetime(2026, 4, 1)
    _sheet(wb, schema.RESULTS, (r.cells() for r in league.results))
    aka = {ALIAS[0]: ALIAS[1]}
    _sheet(wb, schema.PLAYERS, ((n, league.home[n], league.starting.get(n), aka.get(n)) for n in league.home))
    settings = {"league_name": LEAGUE_NAME, "longest_race": 9, "usual_race": 5}
    _sheet(wb, schema.SETTINGS, ((schema.find_setting(k).label, v) for k, v in settings.items()))
    _sheet(wb, schema.FIXTURES, league.fixtures)
    wb.save(path)


def write_csv(path: Path, header: tuple, rows) -> None:
    """A UTF-8 CSV with Unix line ends, the same on every computer."""
    with open(path, "w", newline="", encoding="utf-8") as f:
        out = csv.writer(f, lineterminator="\n")
        out.writerow(header)
        out.writerows(rows)


def write_demo(out_dir: Path, seed: int = SEED) -> dict[str, Path]:
    """Write the three demo files into ``out_dir``; return their paths by file name."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    league = build_league(seed)
    paths = {name: out_dir / name for name in ("league.xlsx", "new-week.csv", "true-skills.csv")}
    write_workbook(league, paths["league.xlsx"])
    write_csv(paths["new-week.csv"], RESULTS_COLUMNS,
              ((r.date.isoformat(),) + r.cells()[1:] for r in league.new_week))
    write_csv(paths["true-skills.csv"], TRUE_SKILLS_COLUMNS,
              ((n, league.home[n], f"{league.strength[n]:.4f}", f"{points(league.strength[n]):.1f}")
               for n in league.home))
    return paths


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=HERE, help="folder to write into (default: demo/)")
    parser.add_argument("--seed", type=int, default=SEED)
    args = parser.parse_args(argv)
    paths = write_demo(args.out, args.seed)
    for path in paths.values():
        print(f"wrote {path} ({path.stat().st_size // 1024} KB)")
    if args.out == HERE:  # the installed package carries a copy for `secretary demo`
        for name in ("league.xlsx", "new-week.csv"):
            packaged = PACKAGE_DATA / f"demo-{name}"
            shutil.copyfile(paths[name], packaged)
            print(f"wrote {packaged}")


if __name__ == "__main__":
    main()
