"""Cluster construction, validation messages and TOML loading (symcluster.lattice.clusters)."""

import pytest

import symcluster as sc
from symcluster.errors import ClusterError, InputError, SymclusterError


# ---------------------------------------------------------------- built-in shapes

@pytest.mark.parametrize("make, n_sites, n_bonds", [
    (lambda: sc.chain(5), 5, 4),
    (lambda: sc.ring(4), 4, 4),
    (lambda: sc.ring(3), 3, 3),
    (lambda: sc.star(4), 5, 4),
    (lambda: sc.tetrahedron(), 4, 6),
    (lambda: sc.complete(5), 5, 10),
    (lambda: sc.cube(), 8, 12),
    (lambda: sc.grid(3, 2), 6, 7),
    (lambda: sc.ladder(3), 6, 7),
    (lambda: sc.grid(3, 3, periodic=True), 9, 18),
])
def test_builtin_shape_counts(make, n_sites, n_bonds):
    # counts of vertices and edges of the standard graphs (common practice, no source)
    c = make()
    assert c.n_sites == n_sites
    assert len(c.bonds) == n_bonds
    assert all(i < j for i, j, _ in c.bonds)
    assert c.is_connected()


def test_ring_bonds_close_the_loop():
    c = sc.ring(4)
    assert {(i, j) for i, j, _ in c.bonds} == {(0, 1), (1, 2), (2, 3), (0, 3)}


def test_two_site_ring_is_refused():
    # a 2-site "ring" would double the single bond; the project refuses it (documented choice)
    with pytest.raises(ClusterError, match="ring length"):
        sc.ring(2)


def test_sublattices_of_bipartite_and_frustrated_clusters():
    a, b = sc.star(4).sublattices()
    assert {len(a), len(b)} == {1, 4}
    assert sc.ring(3).sublattices() is None
    assert sc.tetrahedron().sublattices() is None
    a, b = sc.ring(6).sublattices()
    assert set(a) == {0, 2, 4} and set(b) == {1, 3, 5}


def test_default_label_and_custom_labels():
    c = sc.cluster(3, [(0, 1), (2, 1, "tp")], site_labels={0: "eps"})
    assert c.bonds == ((0, 1, "t"), (1, 2, "tp"))
    assert c.site_labels == ("eps", None, None)
    m = sc.hubbard(c)
    assert [s.name for s in m.symbols] == ["t", "tp", "eps", "U"]
    assert all(s.is_real for s in m.symbols)


def test_repeated_bond_with_same_label_is_kept_once():
    c = sc.cluster(2, [(0, 1, "t"), (1, 0, "t")])
    assert c.bonds == ((0, 1, "t"),)


# ---------------------------------------------------------------- validation messages

def test_site_index_out_of_range():
    with pytest.raises(ClusterError) as exc:
        sc.cluster(3, [(0, 1), (1, 3)])
    msg = str(exc.value)
    assert "3" in msg and "0..2" in msg


def test_negative_site_index():
    with pytest.raises(ClusterError, match="outside 0..2"):
        sc.cluster(3, [(0, -1)])


def test_self_bond():
    with pytest.raises(ClusterError, match=r"\(2, 2\).*itself"):
        sc.cluster(3, [(0, 1), (2, 2)])


def test_same_bond_twice_with_different_labels():
    with pytest.raises(ClusterError) as exc:
        sc.cluster(3, [(0, 1, "t"), (1, 0, "tp")])
    msg = str(exc.value)
    assert "(0, 1)" in msg and "'t'" in msg and "'tp'" in msg


def test_empty_cluster():
    with pytest.raises(ClusterError, match="at least one site"):
        sc.cluster(0, [])


def test_sites_without_bonds():
    with pytest.raises(ClusterError, match="no bonds"):
        sc.cluster(3, [])


def test_non_integer_site_count():
    with pytest.raises(ClusterError, match="not an integer"):
        sc.cluster(2.0, [(0, 1)])


@pytest.mark.parametrize("label", ["2t", "t-1", "", "t p", "α_"])
def test_invalid_label(label):
    with pytest.raises(ClusterError, match="not a valid symbol name"):
        sc.cluster(2, [(0, 1, label)])


@pytest.mark.parametrize("label", ["U", "E", "pi", "sqrt"])
def test_reserved_label(label):
    with pytest.raises(ClusterError, match="reserved"):
        sc.cluster(2, [(0, 1, label)])


def test_invalid_site_label():
    with pytest.raises(ClusterError, match="not a valid symbol name"):
        sc.cluster(2, [(0, 1)], site_labels={0: "1eps"})


def test_site_label_out_of_range():
    with pytest.raises(ClusterError, match="site 5"):
        sc.cluster(2, [(0, 1)], site_labels={5: "eps"})


def test_label_used_for_bond_and_site():
    with pytest.raises(ClusterError, match="both for a bond and for a site"):
        sc.cluster(2, [(0, 1, "a")], site_labels={0: "a"})


def test_malformed_bond():
    with pytest.raises(ClusterError, match="not a pair"):
        sc.cluster(3, [(0, 1, "t", "x")])
    with pytest.raises(ClusterError, match="not a pair"):
        sc.cluster(3, [5])


def test_errors_share_the_root_class():
    with pytest.raises(SymclusterError):
        sc.cluster(2, [(0, 0)])


# ---------------------------------------------------------------- TOML loading

GOOD = '''
format = "symcluster-cluster"
version = 1
name = "bent triangle"
sites = 3
bonds = [[0, 1], [1, 2, "tp"], [0, 2]]
site_energy = { 1 = "eps" }
'''


def test_toml_custom_cluster():
    c = sc.parse_cluster_toml(GOOD)
    assert c.n_sites == 3
    assert c.bonds == ((0, 1, "t"), (0, 2, "t"), (1, 2, "tp"))
    assert c.site_labels == (None, "eps", None)
    assert c.name == "bent triangle"
    # the same cluster built in Python
    same = sc.cluster(3, [(0, 1), (1, 2, "tp"), (0, 2)], site_labels={1: "eps"})
    assert (c.n_sites, c.bonds, c.site_labels) == (same.n_sites, same.bonds, same.site_labels)


def test_toml_file_round_trip(tmp_path):
    p = tmp_path / "tri.toml"
    p.write_text(GOOD, encoding="utf-8")
    c = sc.load_cluster_file(p)
    assert c.bonds == ((0, 1, "t"), (0, 2, "t"), (1, 2, "tp"))


def test_toml_missing_file(tmp_path):
    with pytest.raises(InputError, match="cannot read cluster file"):
        sc.load_cluster_file(tmp_path / "nope.toml")


def test_toml_wrong_format_key():
    with pytest.raises(InputError, match="format"):
        sc.parse_cluster_toml('format = "other"\nsites = 2\nbonds = [[0, 1]]\n')


def test_toml_not_toml():
    with pytest.raises(InputError, match="not valid TOML"):
        sc.parse_cluster_toml("format = \n")


def test_toml_unknown_key():
    with pytest.raises(InputError, match="unknown key 'colour'"):
        sc.parse_cluster_toml('format = "symcluster-cluster"\nsites = 2\nbonds = [[0, 1]]\n'
                              'colour = "red"\n')


def test_toml_missing_sites():
    with pytest.raises(InputError, match="'sites'"):
        sc.parse_cluster_toml('format = "symcluster-cluster"\nbonds = [[0, 1]]\n')


def test_toml_bad_bond_names_source():
    text = 'format = "symcluster-cluster"\nsites = 2\nbonds = [[0, 2]]\n'
    with pytest.raises(ClusterError) as exc:
        sc.parse_cluster_toml(text, source="my.toml")
    assert str(exc.value).startswith("my.toml:")
    assert "outside 0..1" in str(exc.value)


@pytest.mark.parametrize("version", ["2", "true", "1.0", '"1"'])
def test_toml_unsupported_version(version):
    # only the integer 1 (true and 1.0 compare equal to 1 in Python, but are not versions)
    with pytest.raises(InputError, match="version"):
        sc.parse_cluster_toml(f'format = "symcluster-cluster"\nversion = {version}\nsites = 2\n'
                              'bonds = [[0, 1]]\n')


def test_absurd_site_count_is_refused_before_allocating(tmp_path):
    # a typo such as sites = 100000000000 must give one message, not a MemoryError
    with pytest.raises(ClusterError, match="sites"):
        sc.cluster(10**11, [(0, 1)])
    p = tmp_path / "huge.toml"
    p.write_text('format = "symcluster-cluster"\nversion = 1\nsites = 100000000000\n'
                 'bonds = [[0, 1], [1, 2]]\n', encoding="utf-8")
    with pytest.raises(ClusterError, match="huge.toml.*sites"):
        sc.load_cluster_file(p)


def test_cluster_file_that_is_not_utf8(tmp_path):
    p = tmp_path / "b.toml"
    p.write_bytes(b"\xff\xfe sites = 2")
    with pytest.raises(InputError, match="not UTF-8"):
        sc.load_cluster_file(p)


# ---------------------------------------------------------------- API edges (issue "Reliability", finding 6)

def test_bonds_none_is_a_cluster_error_with_a_fix():
    with pytest.raises(ClusterError, match=r"bonds=None is not a list of bonds; give e\.g\."):
        sc.cluster(3, bonds=None)
    with pytest.raises(ClusterError, match="not a list of bonds"):
        sc.cluster(2, bonds="01")


def test_numpy_integers_are_site_indices():
    np = pytest.importorskip("numpy")
    c = sc.cluster(np.int64(3), [(np.int64(0), np.int32(1)), (np.uint8(1), 2, "tp")],
                   site_labels={np.int16(2): "eps"})
    assert c.n_sites == 3 and type(c.n_sites) is int
    assert c.bonds == ((0, 1, "t"), (1, 2, "tp")) and all(type(i) is int for b in c.bonds
                                                            for i in b[:2])
    assert c.site_labels == (None, None, "eps")
    with pytest.raises(ClusterError, match="not an integer index"):
        sc.cluster(2, [(np.float64(0), 1)])
    with pytest.raises(ClusterError, match="not an integer index"):
        sc.cluster(2, [(True, 0)])


@pytest.mark.parametrize("label", ["None", "True", "False", "class", "if", "def", "import",
                                   "lambda", "return", "yield", "not", "and"])
def test_python_keywords_are_not_coupling_labels(label):
    with pytest.raises(ClusterError, match="keyword|reserved"):
        sc.cluster(2, [(0, 1, label)])
    with pytest.raises(ClusterError, match="keyword|reserved"):
        sc.cluster(2, [(0, 1)], site_labels={0: label})
    with pytest.raises(SymclusterError, match="keyword|reserved"):
        sc.hubbard(sc.chain(2), U=label)


@pytest.mark.parametrize("name", ["a\nb", "tab\there", "nul\x00", "bell\x07", "esc\x1b[31m",
                                  "line\u2028sep", "rtl\u202eoverride"])
def test_control_characters_in_a_cluster_name_are_refused(name):
    with pytest.raises(ClusterError, match="control"):
        sc.cluster(2, [(0, 1)], name=name)


def test_a_cluster_file_name_with_a_newline_is_refused(tmp_path):
    f = tmp_path / "c.toml"
    f.write_text('format = "symcluster-cluster"\nname = "two\\nlines"\nsites = 2\n'
                 'bonds = [[0, 1]]\n')
    with pytest.raises(ClusterError, match="control"):
        sc.load_cluster_file(f)
    f.write_text('format = "symcluster-cluster"\nname = 5\nsites = 2\nbonds = [[0, 1]]\n')
    with pytest.raises(InputError, match="'name' must be a string"):
        sc.load_cluster_file(f)
