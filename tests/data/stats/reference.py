"""Reference values for tests/lib/stats.rs (scipy.stats); output committed as reference.txt."""
from scipy import stats
for nu in [0.5, 1.5, 4.2, 99.0, 100.0, 250.0, 1.2e5]:
    print(f"t_0.975({nu}) = {stats.t.ppf(0.975, nu):.15g}")
for x, d1, d2 in [(3.0, 2, 1e4), (3.0, 2, 1.2e5), (19.1219512195, 1, 1.2e5), (2.0, 5, 1e6)]:
    print(f"F.sf({x}, {d1}, {d2:g}) = {stats.f.sf(x, d1, d2):.15g}")
