% problem: Pelletier 41
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: full first-order

fof(h1, axiom,
    ! [Z] : ? [Y] : ! [X] : (f(X, Y) <=> (f(X, Z) & ~f(X, X)))).

fof(pel41_goal, conjecture,
    ~ (? [Z] : ! [X] : f(X, Z))).
