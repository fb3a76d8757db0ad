"""Magnetic nuclides: spin, abundance, magnetogyric ratio, quadrupole moment, Ξ.

Sources
-------
* R. K. Harris, E. D. Becker, S. M. Cabral de Menezes, R. Goodfellow,
  P. Granger, "NMR nomenclature. Nuclear spin properties and conventions for
  chemical shifts (IUPAC Recommendations 2001)", Pure Appl. Chem. 73 (2001)
  1795-1818, Tables 1-3 and 8: spin I, natural abundance, γ, Q, and the
  frequency ratio Ξ with its reference compound (unified scale, 1H of 1 %
  TMS in CDCl3 = 100 % exactly).  Values were entered from that table as
  recalled and cross-checked in the test suite against the CODATA constants
  (scipy.constants) and the isotope data of the ``mendeleev`` package.
* For the lanthanides, Ξ is not given (no recommended reference), except
  171Yb: Ξ = 17.499306 % for (C5Me5)2Yb(THF)2 in THF, the reference used in
  the ¹⁷¹Yb NMR literature (from memory; consistent with γ(171Yb) and the
  shielding expected at Z = 70, see tests/test_nuclide_data.py).
* Corrections to IUPAC 2001, each checked in tests/test_nuclide_data.py:
  - 14N / 15N abundances 99.632 / 0.368 % as IUPAC 2001 Table 1 lists them
    (receptivity of 15N vs 1H then 3.84 × 10⁻⁶, as tabulated there).
  - γ(65Cu): the printed 7.60435 disagrees by 0.18 % with the measured
    frequency ratio Ξ(65Cu)/Ξ(63Cu) of the same compound (and with mendeleev's
    moments, whose 65/63 ratio matches Ξ to 5 ppm); replaced by
    γ(63Cu) × Ξ(65Cu)/Ξ(63Cu) = 7.61823.
  - γ(207Pb): the printed 5.58046 would put the bare-nucleus frequency 2900
    ppm *below* the 0 ppm of Pb(CH3)4 (a negative shielding of that size is
    implausible; Hg and Pt neighbours show +11 000 to +15 000 ppm); the moment
    in mendeleev (g = 1.1812, a later compilation) gives 5.6573 and a shielding
    of 10 700 ppm, in line with its neighbours.  We keep 5.6573.
* R. K. Harris, E. D. Becker, S. M. Cabral de Menezes, P. Granger,
  R. E. Hoffman, K. W. Zilm, "Further conventions for NMR shielding and
  chemical shifts (IUPAC Recommendations 2008)", Pure Appl. Chem. 80 (2008)
  59-84: the alternative Ξ for biomolecular work, referenced to DSS
  (``BIOMOLECULAR_XI`` below).

Columns: nuclide, spin I, natural abundance / %, γ / 10^7 rad s^-1 T^-1,
quadrupole moment Q / fm^2 (``-`` for I = 1/2), Ξ / % (``-`` where none is
recommended), reference compound (``-`` where none).  An abundance of ``-``
marks a nuclide that does not occur naturally in useful amounts (3H, 99Tc).
"""

NUCLIDE_TABLE = """
# nuclide  I    abund%      gamma/1e7     Q/fm2    Xi/%         reference
1H        1/2  99.9885     26.7522128    -        100.000000   Si(CH3)4
2H        1    0.0115      4.10662791    0.2860   15.350609    Si(CD3)4
3H        1/2  -           28.5349779    -        106.663974   Si(CT3)4
3He       1/2  0.000137    -20.3801587   -        76.179437    He (gas)
6Li       1    7.59        3.9371709     -0.0808  14.716086    LiCl (aq)
7Li       3/2  92.41       10.3977013    -4.01    38.863797    LiCl (aq)
9Be       3/2  100         -3.759666     5.288    14.051813    BeSO4 (aq)
10B       3    19.9        2.8746786     8.459    10.743658    BF3.OEt2
11B       3/2  80.1        8.5847044     4.059    32.083974    BF3.OEt2
13C       1/2  1.07        6.728284      -        25.145020    Si(CH3)4
14N       1    99.632      1.9337792     2.044    7.226317     CH3NO2
15N       1/2  0.368       -2.71261804   -        10.136767    CH3NO2
17O       5/2  0.038       -3.62808      -2.558   13.556457    D2O
19F       1/2  100         25.18148      -        94.094011    CCl3F
21Ne      3/2  0.27        -2.11308      10.155   7.894296     Ne (gas)
23Na      3/2  100         7.0808493     10.4     26.451900    NaCl (aq)
25Mg      5/2  10.00       -1.63887      19.94    6.121635     MgCl2 (aq)
27Al      5/2  100         6.9762715     14.66    26.056859    Al(NO3)3 (aq)
29Si      1/2  4.6832      -5.3190       -        19.867187    Si(CH3)4
31P       1/2  100         10.8394       -        40.480742    H3PO4 (85 %)
33S       3/2  0.76        2.055685      -6.78    7.676000     (NH4)2SO4 (aq)
35Cl      3/2  75.78       2.624198      -8.165   9.797909     NaCl (aq)
37Cl      3/2  24.22       2.184368      -6.435   8.155725     NaCl (aq)
39K       3/2  93.2581     1.2500608     5.85     4.666373     KCl (aq)
40K       4    0.0117      -1.5542854    -7.30    5.802018     KCl (aq)
41K       3/2  6.7302      0.68606808    7.11     2.561305     KCl (aq)
43Ca      7/2  0.135       -1.803069     -4.08    6.730029     CaCl2 (aq)
45Sc      7/2  100         6.5087973     -22.0    24.291747    Sc(NO3)3 (aq)
47Ti      5/2  7.44        -1.5105       30.2     5.637534     TiCl4
49Ti      7/2  5.41        -1.51095      24.7     5.639037     TiCl4
50V       6    0.250       2.6706490     21.0     9.970309     VOCl3
51V       7/2  99.750      7.0455117     -5.2     26.302948    VOCl3
53Cr      3/2  9.501       -1.5152       -15.0    5.652496     K2CrO4 (aq)
55Mn      5/2  100         6.6452546     33.0     24.789218    KMnO4 (aq)
57Fe      1/2  2.119       0.8680624     -        3.237778     Fe(CO)5
59Co      7/2  100         6.332         42.0     23.727074    K3[Co(CN)6] (aq)
61Ni      3/2  1.1399      -2.3948       16.2     8.936051     Ni(CO)4
63Cu      3/2  69.17       7.1117890     -22.0    26.515473    [Cu(CH3CN)4]ClO4
65Cu      3/2  30.83       7.61823       -20.4    28.403693    [Cu(CH3CN)4]ClO4
67Zn      5/2  4.10        1.676688      15.0     6.256803     Zn(NO3)2 (aq)
69Ga      3/2  60.108      6.438855      17.1     24.001354    Ga(NO3)3 (aq)
71Ga      3/2  39.892      8.181171      10.7     30.496704    Ga(NO3)3 (aq)
73Ge      9/2  7.73        -0.9360303    -19.6    3.488315     Ge(CH3)4
75As      3/2  100         4.596163      31.4     17.122614    NaAsF6
77Se      1/2  7.63        5.1253857     -        19.071513    Se(CH3)2
79Br      3/2  50.69       6.725616      31.3     25.053980    NaBr (aq)
81Br      3/2  49.31       7.249776      26.2     27.006518    NaBr (aq)
83Kr      9/2  11.49       -1.03310      25.9     3.847600     Kr (gas)
85Rb      5/2  72.17       2.5927050     27.6     9.654943     RbCl (aq)
87Rb      3/2  27.83       8.786400      13.35    32.720454    RbCl (aq)
87Sr      9/2  7.00        -1.1639376    30.5     4.333822     SrCl2 (aq)
89Y       1/2  100         -1.3162791    -        4.900198     Y(NO3)3 (aq)
91Zr      5/2  11.22       -2.49743      -17.6    9.296298     Zr(C5H5)2Cl2
93Nb      9/2  100         6.5674        -32.0    24.476170    K[NbCl6]
95Mo      5/2  15.92       -1.751        -2.2     6.516926     Na2MoO4 (aq)
97Mo      5/2  9.55        -1.788        25.5     6.653695     Na2MoO4 (aq)
99Tc      9/2  -           6.046         -12.9    22.508326    NH4TcO4 (aq)
99Ru      5/2  12.76       -1.229        7.9      4.605151     K4[Ru(CN)6] (aq)
101Ru     5/2  17.06       -1.377        45.7     5.161369     K4[Ru(CN)6] (aq)
103Rh     1/2  100         -0.8468       -        3.186447     Rh(acac)3
105Pd     5/2  22.33       -1.23         66.0     4.576100     K2PdCl6
107Ag     1/2  51.839      -1.0889181    -        4.047819     AgNO3 (aq)
109Ag     1/2  48.161      -1.2518634    -        4.653533     AgNO3 (aq)
111Cd     1/2  12.80       -5.6983131    -        21.215480    Cd(CH3)2
113Cd     1/2  12.22       -5.9609155    -        22.193175    Cd(CH3)2
113In     9/2  4.29        5.8845        79.9     21.865755    In(NO3)3 (aq)
115In     9/2  95.71       5.8972        81.0     21.912629    In(NO3)3 (aq)
115Sn     1/2  0.34        -8.8013       -        32.718749    Sn(CH3)4
117Sn     1/2  7.68        -9.58879      -        35.632259    Sn(CH3)4
119Sn     1/2  8.59        -10.0317      -        37.290632    Sn(CH3)4
121Sb     5/2  57.21       6.4435        -36.0    23.930577    KSbCl6
123Sb     7/2  42.79       3.4892        -49.0    12.959217    KSbCl6
123Te     1/2  0.89        -7.059098     -        26.169742    Te(CH3)2
125Te     1/2  7.07        -8.5108404    -        31.549769    Te(CH3)2
127I      5/2  100         5.389573      -71.0    20.007486    KI (aq)
129Xe     1/2  26.44       -7.452103     -        27.810186    XeOF4
131Xe     3/2  21.18       2.209076      -11.4    8.243921     XeOF4
133Cs     7/2  100         3.5332539     -0.343   13.116142    CsNO3 (aq)
135Ba     3/2  6.592       2.67550       16.0     9.934457     BaCl2 (aq)
137Ba     3/2  11.232      2.99295       24.5     11.112928    BaCl2 (aq)
138La     5    0.090       3.557239      45.0     13.194300    LaCl3 (aq)
139La     7/2  99.910      3.8083318     20.0     14.125641    LaCl3 (aq)
141Pr     5/2  100         8.1907        -5.89    -            -
143Nd     7/2  12.2        -1.457        -63.0    -            -
145Nd     7/2  8.3         -0.898        -33.0    -            -
147Sm     7/2  14.99       -1.115        -25.9    -            -
149Sm     7/2  13.82       -0.9192       7.4      -            -
151Eu     5/2  47.81       6.6510        90.3     -            -
153Eu     5/2  52.19       2.9369        241.2    -            -
155Gd     3/2  14.80       -0.82132      127.0    -            -
157Gd     3/2  15.65       -1.0769       135.0    -            -
159Tb     3/2  100         6.4306        143.2    -            -
161Dy     5/2  18.91       -0.9201       250.7    -            -
163Dy     5/2  24.90       1.289         264.8    -            -
165Ho     7/2  100         5.710         358.0    -            -
167Er     7/2  22.93       -0.77157      356.5    -            -
169Tm     1/2  100         -2.218        -        -            -
171Yb     1/2  14.28       4.7288        -        17.499306    Yb(C5Me5)2(THF)2 (THF)
173Yb     5/2  16.13       -1.3025       280.0    -            -
175Lu     7/2  97.41       3.0552        349.0    -            -
176Lu     7    2.59        2.1684        497.0    -            -
177Hf     7/2  18.60       1.086         336.5    -            -
179Hf     9/2  13.62       -0.6821       379.3    -            -
181Ta     7/2  99.988      3.2438        317.0    11.989600    KTaCl6
183W      1/2  14.31       1.1282403     -        4.166387     Na2WO4 (aq)
185Re     5/2  37.40       6.1057        218.0    22.524600    KReO4 (aq)
187Re     5/2  62.60       6.1682        207.0    22.751600    KReO4 (aq)
187Os     1/2  1.96        0.6192895     -        2.282331     OsO4
189Os     3/2  16.15       2.10713       85.6     7.765400     OsO4
191Ir     3/2  37.3        0.4812        81.6     -            -
193Ir     3/2  62.7        0.5227        75.1     -            -
195Pt     1/2  33.832      5.8385        -        21.496784    Na2PtCl6 (aq)
197Au     3/2  100         0.473060      54.7     -            -
199Hg     1/2  16.87       4.8457916     -        17.910822    Hg(CH3)2
201Hg     3/2  13.18       -1.788769     38.6     6.611583     Hg(CH3)2
203Tl     1/2  29.524      15.5393338    -        57.123200    Tl(NO3)3 (aq)
205Tl     1/2  70.476      15.6921808    -        57.683838    Tl(NO3)3 (aq)
207Pb     1/2  22.1        5.6573        -        20.920599    Pb(CH3)4
209Bi     9/2  100         4.3750        -51.6    16.069288    Bi(NO3)3 (aq)
235U      7/2  0.7204      -0.52         493.6    -            -
"""

# Radioactive nuclides in the table (natural or long-lived; IUPAC 2001 marks them).
RADIOACTIVE = frozenset({"3H", "40K", "50V", "87Rb", "99Tc", "138La", "176Lu", "187Re", "235U"})

# IUPAC 2008, Table 3 (from memory): Ξ on the DSS-based scale used in
# biomolecular NMR (1H of DSS in water = 100 % exactly).
BIOMOLECULAR_XI = """
# nuclide  Xi/%          reference
2H        15.3506088    DSS (2H)
13C       25.1449530    DSS
15N       10.1329118    NH3 (liquid)
31P       40.4808636    (CH3O)3PO (internal)
"""

# Stable (or primordial) isotopes of spin 0: no NMR signal, no splitting.
# Abundances (atom %) from the same IUPAC 2001 Table 1 / IUPAC isotopic
# compositions of the elements; they complete the magnetic isotopes above to
# 100 % for each element listed, which is what isotopologue mixtures need.
SPIN_ZERO_TABLE = """
4He 99.999863
12C 98.93
16O 99.757   18O 0.205
20Ne 90.48   22Ne 9.25
24Mg 78.99   26Mg 11.01
28Si 92.2297 30Si 3.0872
32S 94.93    34S 4.29     36S 0.02
36Ar 0.3365  38Ar 0.0632  40Ar 99.6003
40Ca 96.941  42Ca 0.647   44Ca 2.086   46Ca 0.004   48Ca 0.187
46Ti 8.25    48Ti 73.72   50Ti 5.18
50Cr 4.345   52Cr 83.789  54Cr 2.365
54Fe 5.845   56Fe 91.754  58Fe 0.282
58Ni 68.0769 60Ni 26.2231 62Ni 3.6345  64Ni 0.9256
64Zn 48.63   66Zn 27.90   68Zn 18.75   70Zn 0.62
70Ge 20.38   72Ge 27.31   74Ge 36.72   76Ge 7.83
74Se 0.89    76Se 9.37    78Se 23.77   80Se 49.61   82Se 8.73
78Kr 0.355   80Kr 2.286   82Kr 11.593  84Kr 56.987  86Kr 17.279
84Sr 0.56    86Sr 9.86    88Sr 82.58
90Zr 51.45   92Zr 17.15   94Zr 17.38   96Zr 2.80
92Mo 14.84   94Mo 9.25    96Mo 16.68   98Mo 24.13   100Mo 9.63
96Ru 5.54    98Ru 1.87    100Ru 12.60  102Ru 31.55  104Ru 18.62
102Pd 1.02   104Pd 11.14  106Pd 27.33  108Pd 26.46  110Pd 11.72
106Cd 1.25   108Cd 0.89   110Cd 12.49  112Cd 24.13  114Cd 28.73  116Cd 7.49
112Sn 0.97   114Sn 0.66   116Sn 14.54  118Sn 24.22  120Sn 32.58  122Sn 4.63  124Sn 5.79
120Te 0.09   122Te 2.55   124Te 4.74   126Te 18.84  128Te 31.74  130Te 34.08
124Xe 0.09   126Xe 0.09   128Xe 1.92   130Xe 4.08   132Xe 26.89  134Xe 10.44  136Xe 8.87
130Ba 0.106  132Ba 0.101  134Ba 2.417  136Ba 7.854  138Ba 71.698
136Ce 0.185  138Ce 0.251  140Ce 88.450 142Ce 11.114
142Nd 27.2   144Nd 23.8   146Nd 17.2   148Nd 5.7    150Nd 5.6
144Sm 3.07   148Sm 11.24  150Sm 7.38   152Sm 26.75  154Sm 22.75
152Gd 0.20   154Gd 2.18   156Gd 20.47  158Gd 24.84  160Gd 21.86
156Dy 0.06   158Dy 0.10   160Dy 2.34   162Dy 25.51  164Dy 28.18
162Er 0.14   164Er 1.61   166Er 33.61  168Er 26.78  170Er 14.93
168Yb 0.13   170Yb 3.04   172Yb 21.83  174Yb 31.83  176Yb 12.76
174Hf 0.16   176Hf 5.26   178Hf 27.28  180Hf 35.08
180W 0.12    182W 26.50   184W 30.64   186W 28.43
184Os 0.02   186Os 1.59   188Os 13.24  190Os 26.26  192Os 40.78
190Pt 0.014  192Pt 0.782  194Pt 32.967 196Pt 25.242 198Pt 7.163
196Hg 0.15   198Hg 9.97   200Hg 23.10  202Hg 29.86  204Hg 6.87
204Pb 1.4    206Pb 24.1   208Pb 52.4
232Th 100
238U 99.2742
"""
