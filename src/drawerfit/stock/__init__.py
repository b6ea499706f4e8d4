"""stock"""
