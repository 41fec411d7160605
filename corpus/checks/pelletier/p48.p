% problem: Pelletier 48
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    a = b | c = d).

fof(h2, axiom,
    a = c | b = d).

fof(pel48_goal, conjecture,
    a = d | b = c).
