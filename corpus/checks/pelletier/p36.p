% problem: Pelletier 36
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [X] : ? [Y] : f(X, Y)).

fof(h2, axiom,
    ! [X] : ? [Y] : g(X, Y)).

fof(h3, axiom,
    ! [X, Y] : ((f(X, Y) | g(X, Y)) => (! [Z] : ((f(Y, Z) | g(Y, Z)) => h(X, Z))))).

fof(pel36_goal, conjecture,
    ! [X] : ? [Y] : h(X, Y)).
