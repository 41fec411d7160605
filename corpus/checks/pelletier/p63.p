% problem: Pelletier 63
% source: F. J. Pelletier, "Seventy-five problems for testing automatic theorem provers", Journal of Automated Reasoning 2, 1986
% written from memory: yes, not copied from the paper; the symbol names are ours
% expected status: Theorem
% kind: with equality
% note: uncertain whether the published conjecture is right or left cancellation; both
%   are theorems of group theory (common practice)

fof(assoc, axiom,
    ! [X, Y, Z] : f(f(X, Y), Z) = f(X, f(Y, Z))).

fof(left_identity, axiom,
    ! [X] : f(a, X) = X).

fof(left_inverse, axiom,
    ! [X] : ? [Y] : f(Y, X) = a).

fof(pel63_goal, conjecture,
    ! [X, Y, Z] : (f(X, Y) = f(Z, Y) => X = Z)).
