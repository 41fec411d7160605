% problem: Pelletier 43
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [X, Y] : (q(X, Y) <=> (! [Z] : (f(Z, X) <=> f(Z, Y))))).

fof(pel43_goal, conjecture,
    ! [X, Y] : (q(X, Y) <=> q(Y, X))).
