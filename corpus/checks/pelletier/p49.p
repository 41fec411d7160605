% problem: Pelletier 49
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality

fof(h1, axiom,
    ? [X, Y] : ! [Z] : (Z = X | Z = Y)).

fof(h2, axiom,
    p(a) & p(b)).

fof(h3, axiom,
    a != b).

fof(pel49_goal, conjecture,
    ! [X] : p(X)).
