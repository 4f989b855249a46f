export default function JunctionPage() { return null; }
