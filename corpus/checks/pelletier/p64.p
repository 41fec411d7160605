% problem: Pelletier 64
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality
% note: a left inverse is a right inverse (common practice)

fof(assoc, axiom,
    ! [X, Y, Z] : f(f(X, Y), Z) = f(X, f(Y, Z))).

fof(left_identity, axiom,
    ! [X] : f(a, X) = X).

fof(left_inverse, axiom,
    ! [X] : ? [Y] : f(Y, X) = a).

fof(pel64_goal, conjecture,
    ! [X, Y] : (f(Y, X) = a => f(X, Y) = a)).
